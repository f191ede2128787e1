package catalog

import (
	"strconv"
	"strings"
)

// lineIndex maps concrete key paths to the 1-based line where the key (or
// table header) appears. A concrete path names array elements by index:
// "substance[0].curve[1].branch[0].t_min". The TOML decoder keeps no
// positions per array element, so the catalog scans the (already valid)
// text once more, just for the line numbers of its errors.
type lineIndex map[string]int

// line returns the line of path, or of its nearest ancestor that has one,
// or 0.
func (ix lineIndex) line(path string) int {
	for path != "" {
		if l, ok := ix[path]; ok {
			return l
		}
		path = parentPath(path)
	}
	return 0
}

// parentPath strips the last ".key" or "[i]" from a concrete path.
func parentPath(path string) string {
	if strings.HasSuffix(path, "]") {
		if i := strings.LastIndexByte(path, '['); i >= 0 {
			return path[:i]
		}
	}
	if i := strings.LastIndexByte(path, '.'); i >= 0 {
		return path[:i]
	}
	return ""
}

func joinPath(base, key string) string {
	if base == "" {
		return key
	}
	return base + "." + key
}

func indexPath(base string, i int) string { return base + "[" + strconv.Itoa(i) + "]" }

// lineScanner walks TOML text. It never fails: on text it does not expect
// it moves on, so a malformed input only costs line precision.
type lineScanner struct {
	s      string
	i      int
	line   int
	ix     lineIndex
	counts map[string]int // array-of-tables path → elements seen
}

func indexLines(src string) lineIndex {
	sc := &lineScanner{s: src, line: 1, ix: lineIndex{}, counts: map[string]int{}}
	sc.document()
	return sc.ix
}

func (sc *lineScanner) record(path string) {
	if _, ok := sc.ix[path]; !ok {
		sc.ix[path] = sc.line
	}
}

func (sc *lineScanner) eof() bool { return sc.i >= len(sc.s) }

// skipBlank skips spaces and tabs, and also newlines and comments when
// multiline is set.
func (sc *lineScanner) skipBlank(multiline bool) {
	for !sc.eof() {
		switch c := sc.s[sc.i]; c {
		case ' ', '\t', '\r':
			sc.i++
		case '\n':
			if !multiline {
				return
			}
			sc.line++
			sc.i++
		case '#':
			sc.skipComment()
		default:
			return
		}
	}
}

func (sc *lineScanner) skipComment() {
	for !sc.eof() && sc.s[sc.i] != '\n' {
		sc.i++
	}
}

func (sc *lineScanner) document() {
	cur := ""
	for !sc.eof() {
		sc.skipBlank(true)
		if sc.eof() {
			return
		}
		if sc.s[sc.i] == '[' {
			cur = sc.header()
			continue
		}
		start := sc.i
		parts := sc.key('=')
		if sc.eof() || sc.s[sc.i] != '=' {
			if sc.i == start {
				sc.i++ // unexpected character: move on
			}
			continue
		}
		sc.i++ // '='
		path := cur
		for _, p := range parts {
			path = joinPath(path, p)
			sc.record(path)
		}
		sc.value(path)
	}
}

// header reads "[a.b]" or "[[a.b]]" and returns the concrete path of the
// table it opens.
func (sc *lineScanner) header() string {
	array := strings.HasPrefix(sc.s[sc.i:], "[[")
	if array {
		sc.i += 2
	} else {
		sc.i++
	}
	parts := sc.key(']')
	for !sc.eof() && sc.s[sc.i] == ']' {
		sc.i++
	}
	path := ""
	for j, p := range parts {
		path = joinPath(path, p)
		if array && j == len(parts)-1 {
			n := sc.counts[path]
			sc.counts[path] = n + 1
			path = indexPath(path, n)
		} else if n := sc.counts[path]; n > 0 {
			path = indexPath(path, n-1)
		}
	}
	sc.record(path)
	return path
}

// key reads a possibly dotted, possibly quoted key up to stop (not
// consumed) or the end of the line.
func (sc *lineScanner) key(stop byte) []string {
	var parts []string
	var b strings.Builder
	for !sc.eof() {
		c := sc.s[sc.i]
		switch {
		case c == stop || c == '\n' || c == '#':
			if b.Len() > 0 {
				parts = append(parts, b.String())
			}
			return parts
		case c == '.':
			parts = append(parts, b.String())
			b.Reset()
			sc.i++
		case c == '"' || c == '\'':
			b.WriteString(sc.quoted(c))
		case c == ' ' || c == '\t' || c == '\r':
			sc.i++
		default:
			b.WriteByte(c)
			sc.i++
		}
	}
	if b.Len() > 0 {
		parts = append(parts, b.String())
	}
	return parts
}

// quoted reads a one-line string starting at its quote and returns its
// raw contents (escapes are kept as written; keys in our format are plain).
func (sc *lineScanner) quoted(q byte) string {
	sc.i++
	start := sc.i
	for !sc.eof() {
		c := sc.s[sc.i]
		if c == '\\' && q == '"' {
			sc.i += 2
			continue
		}
		if c == q || c == '\n' {
			break
		}
		sc.i++
	}
	end := min(sc.i, len(sc.s))
	if !sc.eof() && sc.s[sc.i] == q {
		sc.i++
	}
	return sc.s[start:end]
}

// value skips one value, noting the keys of inline tables (also inside
// arrays) under path.
func (sc *lineScanner) value(path string) {
	sc.skipBlank(false)
	if sc.eof() {
		return
	}
	switch c := sc.s[sc.i]; {
	case c == '{':
		sc.i++
		for !sc.eof() {
			sc.skipBlank(true)
			if sc.eof() {
				return
			}
			switch sc.s[sc.i] {
			case '}':
				sc.i++
				return
			case ',':
				sc.i++
				continue
			}
			start := sc.i
			parts := sc.key('=')
			if sc.eof() || sc.s[sc.i] != '=' {
				if sc.i == start {
					sc.i++
				}
				continue
			}
			sc.i++
			p := path
			for _, k := range parts {
				p = joinPath(p, k)
				sc.record(p)
			}
			sc.value(p)
		}
	case c == '[':
		sc.i++
		for n := 0; !sc.eof(); {
			sc.skipBlank(true)
			if sc.eof() {
				return
			}
			switch sc.s[sc.i] {
			case ']':
				sc.i++
				return
			case ',':
				sc.i++
				continue
			}
			p := indexPath(path, n)
			sc.record(p)
			start := sc.i
			sc.value(p)
			if sc.i == start {
				sc.i++
			}
			n++
		}
	case strings.HasPrefix(sc.s[sc.i:], `"""`) || strings.HasPrefix(sc.s[sc.i:], `'''`):
		q := sc.s[sc.i : sc.i+3]
		sc.i += 3
		for !sc.eof() {
			if q == `"""` && sc.s[sc.i] == '\\' {
				if sc.i+1 < len(sc.s) && sc.s[sc.i+1] == '\n' {
					sc.line++
				}
				sc.i += 2
				continue
			}
			if strings.HasPrefix(sc.s[sc.i:], q) {
				sc.i += 3
				// up to two more quotes may belong to the string
				for k := 0; k < 2 && !sc.eof() && sc.s[sc.i] == q[0]; k++ {
					sc.i++
				}
				return
			}
			if sc.s[sc.i] == '\n' {
				sc.line++
			}
			sc.i++
		}
	case c == '"' || c == '\'':
		sc.quoted(c)
	default:
		for !sc.eof() {
			switch sc.s[sc.i] {
			case ',', ']', '}', '\n', '#':
				return
			}
			sc.i++
		}
	}
}
