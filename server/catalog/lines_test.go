package catalog

import "testing"

func TestIndexLines(t *testing.T) {
	t.Parallel()
	src := `# a comment with [[brackets]] and key = value
format = 1
note = """
[[substance]]
not a header"""
'literal key' = 'x # not a comment'

[[substance]] # comment
id = "a"
list = [
  1.0, # one
  2.0,
]
critical = { temperature = 1.0,
  pressure = 2.0 }
  [[substance.curve]]
  kind = "melting"
    [[substance.curve.branch]]
    name = "b1"
    [substance.curve.branch.params]
    t0 = 1.0
    [[substance.curve.branch]]
    name = "b2"
  [[substance.curve]]
  kind = "saturation"

[[ substance ]]
"id" = "b"
dotted.key = 3
curve = [ { kind = "x", branch = [ {
  family = "f" } ] } ]
`
	ix := indexLines(src)
	for path, want := range map[string]int{
		"format":                                    2,
		"note":                                      3,
		"literal key":                               6,
		"substance[0]":                              8,
		"substance[0].id":                           9,
		"substance[0].list":                         10,
		"substance[0].critical.temperature":         14,
		"substance[0].critical.pressure":            15,
		"substance[0].curve[0]":                     16,
		"substance[0].curve[0].kind":                17,
		"substance[0].curve[0].branch[0]":           18,
		"substance[0].curve[0].branch[0].name":      19,
		"substance[0].curve[0].branch[0].params":    20,
		"substance[0].curve[0].branch[0].params.t0": 21,
		"substance[0].curve[0].branch[1].name":      23,
		"substance[0].curve[1].kind":                25,
		"substance[1]":                              27,
		"substance[1].id":                           28,
		"substance[1].dotted.key":                   29,
		"substance[1].curve[0].branch[0].family":    31,
		// Fallback to the nearest ancestor.
		"substance[0].curve[0].branch[1].t_min": 22,
		"substance[1].curve[0].kind":            30,
		"absent":                                0,
	} {
		if got := ix.line(path); got != want {
			t.Errorf("line(%q) = %d, want %d", path, got, want)
		}
	}
	if _, ok := ix["substance[2]"]; ok {
		t.Error("the header inside a multi-line string was counted")
	}
}
