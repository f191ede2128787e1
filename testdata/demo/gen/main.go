//go:build ignore

// Command gen writes the demo scenario's invented measurement files for
// the invented phase-change material "Frostwax PX-18" (catalog id
// demo-frostwax). INVENTED DATA, for demonstration only, never for design.
//
// The "true" behaviour of the material is an invented law that differs on
// purpose from the equations in server/catalog/default/demo.toml, so that
// fitting a catalog family to these files is a real fit with real
// residuals:
//
//	melting:  P(T) = Pt + k1·ΔT + k2·ΔT²,  ΔT = T − Tt
//	vapour:   ln(P/Pa) = α − β/T + κ·ln(T/K) + μ·T + ν/T²
//
// with the constants below (α and β are solved so the vapour law passes
// through two invented anchor points). Each "measurement" jitters the
// temperature a little (the set point is never hit exactly), evaluates the
// law there, adds Gaussian noise to the pressure with the standard
// deviation stated in the code, and rounds to what a logger would record.
// The weight column is (σ_rel,min/σ_rel)², σ_rel = σ/P: 1 for the point with
// the smallest relative uncertainty, as a fit of relative deviations wants.
//
// The random numbers come from a PCG generator with fixed seeds and a
// Box–Muller transform written out here, so the files are reproducible:
//
//	go run testdata/demo/gen/main.go -dir testdata/demo
package main

import (
	"flag"
	"fmt"
	"log"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// Invented constants (all SI).
const (
	tTriple = 291.35 // K, the catalog's triple point
	pTriple = 12.0   // Pa

	k1 = 3.30e6 // Pa/K, initial melting slope (the catalog's is 3.387e6)
	k2 = 1.2e4  // Pa/K², curvature of the melting law

	kappa = -4.8    // vapour law, ln T coefficient
	mu    = -1.2e-3 // 1/K
	nu    = -9.0e4  // K²

	// Anchors of the vapour law (the catalog gives 23.91 Pa and 14.39 kPa).
	anchorT1, anchorP1 = 300.0, 23.5 // K, Pa
	anchorT2, anchorP2 = 420.0, 1.46e4
)

// normal draws standard normal deviates by Box–Muller from a PCG stream.
type normal struct {
	r     *rand.PCG
	spare float64
	have  bool
}

func (n *normal) uniform() float64 {
	return (float64(n.r.Uint64()>>11) + 0.5) / (1 << 53) // in (0, 1)
}

func (n *normal) next() float64 {
	if n.have {
		n.have = false
		return n.spare
	}
	u1, u2 := n.uniform(), n.uniform()
	rad := math.Sqrt(-2 * math.Log(u1))
	n.spare, n.have = rad*math.Sin(2*math.Pi*u2), true
	return rad * math.Cos(2*math.Pi*u2)
}

type point struct{ t, p, w float64 }

func melting() []point {
	n := &normal{r: rand.NewPCG(20261202, 1)}
	var raw []point
	for i := range 26 {
		t := 292.0 + 2.5*float64(i) + 0.05*n.next() // set point ± 0.05 K
		t = math.Round(t*100) / 100                 // logged to 0.01 K
		dt := t - tTriple
		p := pTriple + k1*dt + k2*dt*dt
		sigma := 0.15e6 + 0.002*p // Pa: 0.15 MPa gauge floor + 0.2 % of reading
		p += sigma * n.next()
		p = math.Round(p/1e3) * 1e3 // logged to 1 kPa
		raw = append(raw, point{t, p, sigma / p})
	}
	return weighted(raw)
}

// weighted turns the relative standard deviations held in w into weights
// (σ_rel,min/σ_rel)², for a fit that minimises weighted squared relative
// deviations.
func weighted(raw []point) []point {
	relMin := math.Inf(1)
	for _, q := range raw {
		relMin = math.Min(relMin, q.w)
	}
	out := make([]point, len(raw))
	for i, q := range raw {
		out[i] = point{q.t, q.p, roundSig((relMin/q.w)*(relMin/q.w), 3)}
	}
	return out
}

func vapour() []point {
	// Solve α, β from the anchors: ln P + β/T = α + κ ln T + μ T + ν/T².
	rest := func(t float64) float64 { return kappa*math.Log(t) + mu*t + nu/(t*t) }
	y1 := math.Log(anchorP1) - rest(anchorT1)
	y2 := math.Log(anchorP2) - rest(anchorT2)
	beta := (y2 - y1) / (1/anchorT1 - 1/anchorT2)
	alpha := y1 + beta/anchorT1
	n := &normal{r: rand.NewPCG(20261202, 2)}
	var raw []point
	for i := range 30 {
		t := 295.0 + 5*float64(i) + 0.02*n.next()
		t = math.Round(t*100) / 100
		p := math.Exp(alpha - beta/t + kappa*math.Log(t) + mu*t + nu/(t*t))
		sigma := 0.004*p + 0.2 // Pa: 0.4 % of reading + 0.2 Pa floor
		p += sigma * n.next()
		p = roundSig(p, 5)
		raw = append(raw, point{t, p, sigma / p})
	}
	return weighted(raw)
}

// roundSig rounds x to digits significant digits.
func roundSig(x float64, digits int) float64 {
	v, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', digits, 64), 64)
	if err != nil {
		log.Fatal(err)
	}
	return v
}

func write(path, title string, pts []point) {
	var b strings.Builder
	b.WriteString("temperature_k,pressure_pa,weight\n")
	for _, q := range pts {
		fmt.Fprintf(&b, "%.2f,%s,%s\n", q.t, strconv.FormatFloat(q.p, 'f', -1, 64), strconv.FormatFloat(q.w, 'f', -1, 64))
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%s: %d points of %s\n", path, len(pts), title)
}

func main() {
	dir := flag.String("dir", "testdata/demo", "folder to write the CSV files to")
	flag.Parse()
	write(filepath.Join(*dir, "frostwax-melting.csv"), "invented melting pressures", melting())
	write(filepath.Join(*dir, "frostwax-vapor.csv"), "invented vapour pressures", vapour())
}
