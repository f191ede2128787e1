package catalog

import (
	"bytes"
	"errors"
	"os"
	"strings"
	"testing"
)

// FuzzParse feeds arbitrary text to Parse: it must never panic, every
// refusal must be one line naming the file, and whatever it accepts must
// survive a Write/Parse round trip unchanged.
func FuzzParse(f *testing.F) {
	good, err := os.ReadFile(goodPath)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(good)
	embedded, err := defaultFS.ReadDir("default")
	if err != nil {
		f.Fatal(err)
	}
	for _, e := range embedded {
		data, err := defaultFS.ReadFile("default/" + e.Name())
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Add([]byte(overlayText))
	f.Add([]byte("format = 1\n"))
	f.Add([]byte("format = 1\ninclude_default = true\n"))
	f.Add([]byte("format = 1\nsubstance = [{ id = \"x\", molar_mass = 1, curve = [] }]\n"))
	f.Add([]byte(strings.Replace(string(good), "t_min = 200.0", "t_min = 900.0", 1)))
	f.Add([]byte("[[substance.curve.branch]]\nparams = { a = [1, 2, 3], b = nan }\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		c, err := Parse("fuzz.toml", data)
		if err != nil {
			msg := err.Error()
			if strings.Contains(msg, "\n") {
				t.Fatalf("error spans several lines: %q", msg)
			}
			var ce *Error
			if errors.As(err, &ce) && !strings.HasPrefix(msg, "fuzz.toml") && ce.File == "fuzz.toml" {
				t.Fatalf("error does not start with the file name: %q", msg)
			}
			return
		}
		var buf bytes.Buffer
		if err := Write(&buf, c); err != nil {
			t.Fatalf("Write: %v", err)
		}
		back, err := Parse("fuzz.toml", buf.Bytes())
		if err != nil {
			t.Fatalf("the written catalog does not parse: %v\n%s", err, buf.String())
		}
		b1, s1 := content(c)
		b2, s2 := content(back)
		if !equalContent(b1, b2, s1, s2) || back.IncludeDefault != c.IncludeDefault {
			t.Fatalf("round trip changed the catalog:\n%s", buf.String())
		}
	})
}
