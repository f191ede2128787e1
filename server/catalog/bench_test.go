package catalog

import "testing"

var sinkCatalog *Catalog

func BenchmarkParseDemo(b *testing.B) {
	data, err := defaultFS.ReadFile("default/demo.toml")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		c, err := Parse("demo.toml", data)
		if err != nil {
			b.Fatal(err)
		}
		sinkCatalog = c
	}
}
