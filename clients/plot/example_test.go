package plot

import (
	"context"
	"fmt"
	"image"
	"os"
	"path/filepath"
)

// Draw a substance's phase diagram and save it as PNG. Any Source works:
// *goclient.Client against a server, or (here) an invented test substance.
func ExamplePhaseDiagram() {
	p, err := PhaseDiagram(context.Background(), fakeSource{}, "fakium", Options{
		Data: []Point{{T: 250, P: 5500}, {T: 300, P: 55000}},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	dir, err := os.MkdirTemp("", "phasebound-plot")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "fakium.png")
	if err := Save(p, path); err != nil {
		fmt.Println(err)
		return
	}
	f, err := os.Open(path)
	if err != nil {
		fmt.Println(err)
		return
	}
	defer f.Close()
	cfg, format, err := image.DecodeConfig(f)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s %d×%d\n", format, cfg.Width, cfg.Height)
	// Output:
	// png 1361×907
}

func ExampleFormatPressure() {
	for _, p := range []float64{611.657, 101325, 22.064e6, 2.216e9, 1e-3} {
		fmt.Println(FormatPressure(p))
	}
	// Output:
	// 611.7 Pa
	// 101.3 kPa
	// 22.06 MPa
	// 2.216 GPa
	// 1 mPa
}
