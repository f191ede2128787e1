package sdk

import (
	"fmt"
	"runtime/debug"
	"sort"
	"strings"

	"github.com/phasebound/phasebound/thermo"
)

// standardCurves and standardVolumes name the families each standard
// backend serves. The families themselves live in package thermo and are
// resolved through its registry when a backend is built.
var (
	standardCurves = map[string][]string{
		"vapor": {"clausius-clapeyron", "antoine", "extended-antoine", "wagner", "iapws-if97"},
		"solid": {"clapeyron-linear", "simon-glatzel", "power-sum", "log-power-sum",
			"shifted-power-sum", "inverse-log-power-sum"},
		"volume": nil,
	}
	standardVolumes = map[string][]string{
		"volume": {"density-power-series", "density-log-series", "rackett", "ideal-gas",
			"second-virial", "linear-density"},
	}
)

// StandardNames returns the names of the standard backends, sorted.
func StandardNames() []string {
	names := make([]string, 0, len(standardCurves))
	for n := range standardCurves {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// StandardFor returns the standard backend that serves family (a curve or a
// volume family), or an error listing the families the standard backends
// serve.
func StandardFor(family string) (string, error) {
	for _, table := range []map[string][]string{standardCurves, standardVolumes} {
		for backend, fams := range table {
			for _, f := range fams {
				if f == family {
					return backend, nil
				}
			}
		}
	}
	var all []string
	for _, table := range []map[string][]string{standardCurves, standardVolumes} {
		for _, fams := range table {
			all = append(all, fams...)
		}
	}
	sort.Strings(all)
	return "", fmt.Errorf("sdk: no standard backend serves family %q (standard families: %s)",
		family, strings.Join(all, ", "))
}

// Standard returns the standard backend name with the families of its group
// that package thermo has registered, or an error listing the valid names.
// A family of the group that this build lacks is left out (the host sees
// the served families through Describe, and a request for a missing one
// fails with a SetupError naming the served ones); Serve logs it.
func Standard(name string) (Backend, error) {
	curves, ok := standardCurves[name]
	if !ok {
		return Backend{}, fmt.Errorf("sdk: unknown standard backend %q (valid: %s)", name, strings.Join(StandardNames(), ", "))
	}
	b := Backend{Name: name, Version: buildVersion()}
	for _, n := range curves {
		if f, err := thermo.GetFamily(n); err == nil {
			b.Families = append(b.Families, f)
		}
	}
	for _, n := range standardVolumes[name] {
		if f, err := thermo.GetVolumeFamily(n); err == nil {
			b.Volumes = append(b.Volumes, f)
		}
	}
	return b, nil
}

// standardMissing lists the families of standard backend name that this
// build has not registered.
func standardMissing(name string) []string {
	var missing []string
	for _, n := range standardCurves[name] {
		if _, err := thermo.GetFamily(n); err != nil {
			missing = append(missing, n)
		}
	}
	for _, n := range standardVolumes[name] {
		if _, err := thermo.GetVolumeFamily(n); err != nil {
			missing = append(missing, n)
		}
	}
	return missing
}

// MustStandard is Standard for a backend's main function: it panics when
// the name is wrong, a programming error.
func MustStandard(name string) Backend {
	b, err := Standard(name)
	if err != nil {
		panic(err)
	}
	return b
}

// buildVersion is the main module's version, "devel" for a local build.
func buildVersion() string {
	if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" && bi.Main.Version != "(devel)" {
		return bi.Main.Version
	}
	return "devel"
}
