package server

import (
	"os"
	"strings"
	"testing"

	"github.com/phasebound/phasebound/server/catalog"
)

// TestDeployCatalogParses checks that the catalog in the Kubernetes
// ConfigMap example is one the server accepts.
func TestDeployCatalogParses(t *testing.T) {
	t.Parallel()
	b, err := os.ReadFile("../deploy/kubernetes/configmap-catalog.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, block, ok := strings.Cut(string(b), "catalog.toml: |\n")
	if !ok {
		t.Fatal("no catalog.toml block in the ConfigMap")
	}
	var lines []string
	for _, l := range strings.Split(block, "\n") {
		lines = append(lines, strings.TrimPrefix(l, "    "))
	}
	cat, err := catalog.Parse("configmap-catalog.yaml", []byte(strings.Join(lines, "\n")))
	if err != nil {
		t.Fatalf("the ConfigMap's catalog does not parse: %v", err)
	}
	def, err := catalog.Default()
	if err != nil {
		t.Fatal(err)
	}
	if len(def.Substances) == 0 || len(cat.Substances) != len(def.Substances) {
		t.Errorf("the ConfigMap's catalog has %d substances, want the %d of the embedded default", len(cat.Substances), len(def.Substances))
	}
}
