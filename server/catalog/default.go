package catalog

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"path"
	"slices"
	"sort"
	"strings"
	"sync"
)

//go:generate go run ../../testdata/demo/gen/main.go -dir ../../testdata/demo

//go:embed default/*.toml
var defaultFS embed.FS

// defaultOrder fixes the order of the embedded files; files not named here
// follow in name order.
var defaultOrder = []string{"water.toml", "carbon-dioxide.toml", "demo.toml"}

// DefaultSource is the Source of the embedded default catalog.
const DefaultSource = "embedded default"

var defaultCatalog = sync.OnceValues(func() (*Catalog, error) { return loadDefault(defaultFS) })

// Default returns the embedded default catalog: water, carbon dioxide and
// the invented substances of the demo scenario. It is parsed once and
// shared; callers must not modify it. An error means the embedded data is
// broken, which the package's tests catch.
func Default() (*Catalog, error) { return defaultCatalog() }

// loadDefault parses and merges fsys's default/*.toml in the fixed order.
func loadDefault(fsys fs.FS) (*Catalog, error) {
	entries, err := fs.ReadDir(fsys, "default")
	if err != nil {
		return nil, fmt.Errorf("catalog: embedded default: %w", err)
	}
	names := make([]string, 0, len(entries))
	for _, e := range entries {
		if !e.IsDir() && strings.HasSuffix(e.Name(), ".toml") {
			names = append(names, e.Name())
		}
	}
	sort.Slice(names, func(i, j int) bool {
		ri, rj := rank(names[i]), rank(names[j])
		if ri != rj {
			return ri < rj
		}
		return names[i] < names[j]
	})
	var c *Catalog
	for _, name := range names {
		data, err := fs.ReadFile(fsys, path.Join("default", name))
		if err != nil {
			return nil, fmt.Errorf("catalog: embedded default: %w", err)
		}
		f, err := parseFile(path.Join("default", name), data, "")
		if err != nil {
			return nil, fmt.Errorf("catalog: embedded default: %w", err)
		}
		if f.cat.IncludeDefault {
			return nil, fmt.Errorf("catalog: embedded default: %s must not set include_default", name)
		}
		if len(f.refs) > 0 {
			return nil, fmt.Errorf("catalog: embedded default: %w", f.refs[0].err)
		}
		if c == nil {
			c = f.cat
		} else {
			for _, sub := range f.cat.Substances {
				if c.Lookup(sub.ID) != nil {
					return nil, fmt.Errorf("catalog: embedded default: %s:%d: substance %q is defined in two embedded files", name, sub.Line, sub.ID)
				}
			}
			c = Merge(c, f.cat)
		}
	}
	if c == nil {
		return nil, errors.New("catalog: embedded default: no catalog files")
	}
	c.Source = DefaultSource
	return c, nil
}

func rank(name string) int {
	if i := slices.Index(defaultOrder, name); i >= 0 {
		return i
	}
	return len(defaultOrder)
}
