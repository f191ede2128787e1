package audit_test

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/phasebound/phasebound/server/audit"
	"github.com/phasebound/phasebound/server/catalog"
)

// A sublimation curve shifted 10 % in pressure misses the triple point:
// the audit says by how much, in pressure and in temperature.
func ExampleCheck() {
	path := filepath.Join("..", "..", "testdata", "audit", "shifted-branch.toml")
	data, err := os.ReadFile(path)
	if err != nil {
		fmt.Println(err)
		return
	}
	cat, err := catalog.Parse(path, data)
	if err != nil {
		fmt.Println(err)
		return
	}
	rep, err := audit.Check(cat, "testium", audit.Tolerances{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("ok:", rep.OK)
	for _, f := range rep.Findings {
		if f.Severity == audit.SeverityError {
			fmt.Printf("%s %s %s: gap %.1f %% in P, %.2f K in T\n", f.Severity, f.Code, f.Where(),
				100*f.Values["pressure_gap_rel"], f.Values["temperature_gap_k"])
		}
	}
	// Output:
	// ok: false
	// error triple-point-gap sublimation: gap 10.0 % in P, 1.16 K in T
}
