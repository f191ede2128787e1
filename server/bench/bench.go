package bench

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"
	"time"

	"google.golang.org/protobuf/proto"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// Defaults applied when the corresponding Config field is zero.
const (
	DefaultPoints        = 1_000_000
	DefaultRepeat        = 5
	DefaultBatch         = 64 << 10
	DefaultCallers       = 8
	DefaultUnaryDuration = time.Second
)

// Goals of issue 5, as ratios and limits.
const (
	GoalRPCOverEcho     = 1.3   // rpc_batch_ns_per_point ≤ 1.3 × echo_floor_ns_per_point
	GoalTableOverDirect = 1.0   // table_ns_per_point ≤ 1.0 × direct_ns_per_point
	GoalUnaryOverEcho   = 0.8   // unary_calls_per_second ≥ 0.8 × echo_unary_calls_per_second
	GoalTableError      = 1e-10 // table_max_rel_error ≤ 1e-10
)

// Case is one curve branch the benchmark evaluates P(T) on.
type Case struct {
	Substance string
	Curve     thermo.CurveKind
	// Branch names the branch; "" for a single-branch curve.
	Branch string
}

// DefaultCases are five families of the embedded catalog: IAPWS-IF97
// saturation and the ice-Ih melting (power-sum) and sublimation
// (inverse-log-power-sum) branches of water, and the carbon-dioxide
// saturation (Wagner) and melting (shifted-power-sum) curves.
func DefaultCases() []Case {
	return []Case{
		{Substance: "water", Curve: thermo.Saturation},
		{Substance: "water", Curve: thermo.Melting, Branch: "ice-Ih"},
		{Substance: "water", Curve: thermo.Sublimation, Branch: "ice-Ih"},
		{Substance: "carbon-dioxide", Curve: thermo.Saturation},
		{Substance: "carbon-dioxide", Curve: thermo.Melting},
	}
}

// Config configures Run. The zero value of every field but Client and
// Catalog means the documented default.
type Config struct {
	// Client reaches the server being measured.
	Client phaseboundpb.BoundaryServiceClient
	// Catalog is the catalog the server serves: the direct correlations
	// are built from it.
	Catalog *catalog.Catalog
	// Cases to measure; nil means DefaultCases.
	Cases []Case
	// Points per case; 0 means DefaultPoints.
	Points int
	// Repeat is the number of repetitions whose median is reported; 0
	// means DefaultRepeat.
	Repeat int
	// Batch is the number of points per Evaluate (and Echo) call; 0 means
	// DefaultBatch.
	Batch int
	// Callers is the number of concurrent unary callers; 0 means
	// DefaultCallers.
	Callers int
	// UnaryDuration is how long each unary measurement runs; 0 means
	// DefaultUnaryDuration.
	UnaryDuration time.Duration
	// Seed of the bench data; the same seed gives the same data.
	Seed uint64
	// Progress, if set, receives one line per step.
	Progress func(msg string)
}

func (c Config) withDefaults() Config {
	if c.Cases == nil {
		c.Cases = DefaultCases()
	}
	if c.Points <= 0 {
		c.Points = DefaultPoints
	}
	if c.Repeat <= 0 {
		c.Repeat = DefaultRepeat
	}
	if c.Batch <= 0 {
		c.Batch = DefaultBatch
	}
	if c.Callers <= 0 {
		c.Callers = DefaultCallers
	}
	if c.UnaryDuration <= 0 {
		c.UnaryDuration = DefaultUnaryDuration
	}
	if c.Progress == nil {
		c.Progress = func(string) {}
	}
	return c
}

// Report is the outcome of Run. Every *_ns_per_point and *_per_second
// figure is the median over the repetitions; the aggregate ns/point is the
// time over all cases divided by all points.
type Report struct {
	Points        int    `json:"points"`
	PointsPerCase int    `json:"points_per_case"`
	Repeat        int    `json:"repeat"`
	BatchPoints   int    `json:"batch_points"`
	UnaryCallers  int    `json:"unary_callers"`
	GOMAXPROCS    int    `json:"gomaxprocs"`
	GoVersion     string `json:"go_version"`

	DirectNs float64 `json:"direct_ns_per_point"`
	TableNs  float64 `json:"table_ns_per_point"`
	// TableBatchNs is the table evaluated a whole batch at a time
	// (thermo.TablePoints, one goroutine), as the server's table pass
	// and a client's local batch evaluation do.
	TableBatchNs float64 `json:"table_batch_ns_per_point"`
	RPCBatchNs   float64 `json:"rpc_batch_ns_per_point"`
	EchoFloorNs  float64 `json:"echo_floor_ns_per_point"`
	ExactNs      float64 `json:"exact_ns_per_point"`
	UnaryCPS     float64 `json:"unary_calls_per_second"`
	EchoUnaryCPS float64 `json:"echo_unary_calls_per_second"`
	// TableMaxRelError is measured here: |table − direct|/|direct| of P
	// over the bench data, the maximum over every case.
	TableMaxRelError float64 `json:"table_max_rel_error"`
	// TableMaxRelErrorSlope is the same for dP/dT (the table's slope is the
	// derivative of the interpolant; no goal applies).
	TableMaxRelErrorSlope float64 `json:"table_max_rel_error_slope"`
	// ServedTableMaxRelError is the largest error the server reports for
	// the tables used (measured on its check grid at build time).
	ServedTableMaxRelError float64 `json:"served_table_max_rel_error"`
	// TableAllocsPerPoint counts heap allocations of the table loop (the
	// least of three passes, the worst case).
	TableAllocsPerPoint float64 `json:"table_allocs_per_point"`
	// RPCMatchesTable reports whether every value served by the batch RPC
	// equals the locally evaluated exported table bit for bit.
	RPCMatchesTable bool `json:"rpc_matches_table"`
	// Bytes per point of the Evaluate response and of the Echo response
	// used as its floor (Echo returns whole copies of the request, so the
	// sizes match to within one copy).
	EvaluateResponseBytesPerPoint float64 `json:"evaluate_response_bytes_per_point"`
	EchoResponseBytesPerPoint     float64 `json:"echo_response_bytes_per_point"`

	Latent   LatentReport   `json:"latent_heat"`
	Ratios   Ratios         `json:"ratios"`
	Goals    Goals          `json:"goals"`
	AllMet   bool           `json:"all_goals_met"`
	Families []FamilyReport `json:"families"`
}

// LatentReport compares the latent-heat path with the pressure path on the
// cases whose curves have phase volumes (or a vapour side).
type LatentReport struct {
	Cases int `json:"cases"`
	// Pressure path: P and dP/dT only.
	DirectNs   float64 `json:"direct_ns_per_point"`
	TableNs    float64 `json:"table_ns_per_point"`
	RPCBatchNs float64 `json:"rpc_batch_ns_per_point"`
	// Latent path: P, dP/dT, both phase volumes and ΔH.
	LatentDirectNs    float64 `json:"latent_direct_ns_per_point"`
	LatentTableNs     float64 `json:"latent_table_ns_per_point"`
	LatentRPCBatchNs  float64 `json:"latent_rpc_batch_ns_per_point"`
	LatentEchoFloorNs float64 `json:"latent_echo_floor_ns_per_point"`
	// VolumeTablesNs is the two phase-volume tables alone: the extra work
	// of the latent path over the pressure path.
	VolumeTablesNs float64 `json:"volume_tables_ns_per_point"`
	// Ratios: latent over pressure path, and the latent RPC over its floor.
	TableRatio            float64 `json:"latent_table_over_table"`
	DirectRatio           float64 `json:"latent_direct_over_direct"`
	RPCRatio              float64 `json:"latent_rpc_over_rpc"`
	RPCOverEcho           float64 `json:"latent_rpc_over_echo_floor"`
	TableOverDirect       float64 `json:"latent_table_over_latent_direct"`
	ResponseBytesPerPoint float64 `json:"latent_response_bytes_per_point"`
}

// Ratios are the figures the goals are stated in.
type Ratios struct {
	RPCOverEcho     float64 `json:"rpc_batch_over_echo_floor"`
	TableOverDirect float64 `json:"table_over_direct"`
	UnaryOverEcho   float64 `json:"unary_over_echo_unary"`
	ExactOverRPC    float64 `json:"exact_over_rpc_batch"`
	RPCOverTable    float64 `json:"rpc_batch_over_table"`
	// EchoPlusTableOverEcho is (echo floor + batch table) / echo floor:
	// the rpc/echo ratio a server would reach that added nothing to the
	// transport but the table evaluation itself, done on one core.
	EchoPlusTableOverEcho float64 `json:"echo_plus_table_over_echo"`
}

// Goal is one goal: the measured value, its limit and whether it is met.
type Goal struct {
	Value float64 `json:"value"`
	Limit float64 `json:"limit"`
	// Compare is "<=" or ">=".
	Compare string `json:"compare"`
	Met     bool   `json:"met"`
}

func goal(v, limit float64, atMost bool) Goal {
	if atMost {
		return Goal{Value: v, Limit: limit, Compare: "<=", Met: v <= limit}
	}
	return Goal{Value: v, Limit: limit, Compare: ">=", Met: v >= limit}
}

// Goals are the goals of issue 5.
type Goals struct {
	RPCOverEcho     Goal `json:"rpc_batch_over_echo_floor"`
	TableOverDirect Goal `json:"table_over_direct"`
	TableAllocs     Goal `json:"table_allocs_per_point"`
	TableError      Goal `json:"table_max_rel_error"`
	UnaryOverEcho   Goal `json:"unary_over_echo_unary"`
}

// FamilyReport is one case's figures (medians over the repetitions).
type FamilyReport struct {
	Substance string  `json:"substance"`
	Curve     string  `json:"curve"`
	Branch    string  `json:"branch"`
	Family    string  `json:"family"`
	Tmin      float64 `json:"t_min_k"`
	Tmax      float64 `json:"t_max_k"`
	Segments  int     `json:"table_segments"`
	Coeffs    int     `json:"table_coefficients"`

	DirectNs     float64 `json:"direct_ns_per_point"`
	TableNs      float64 `json:"table_ns_per_point"`
	TableBatchNs float64 `json:"table_batch_ns_per_point"`
	RPCBatchNs   float64 `json:"rpc_batch_ns_per_point"`
	EchoFloorNs  float64 `json:"echo_floor_ns_per_point"`
	ExactNs      float64 `json:"exact_ns_per_point"`

	TableMaxRelError       float64 `json:"table_max_rel_error"`
	TableMaxRelErrorSlope  float64 `json:"table_max_rel_error_slope"`
	ServedTableMaxRelError float64 `json:"served_table_max_rel_error"`
	ExactMaxRelDiff        float64 `json:"exact_max_rel_diff"`

	TableOverDirect float64 `json:"table_over_direct"`
	RPCOverEcho     float64 `json:"rpc_batch_over_echo_floor"`

	// Latent path (omitted where the curve has no volumes and no vapour).
	LatentDirectNs   float64 `json:"latent_direct_ns_per_point,omitempty"`
	LatentTableNs    float64 `json:"latent_table_ns_per_point,omitempty"`
	LatentRPCBatchNs float64 `json:"latent_rpc_batch_ns_per_point,omitempty"`
	LatentEchoNs     float64 `json:"latent_echo_floor_ns_per_point,omitempty"`
	LatentMaxRelDiff float64 `json:"latent_table_max_rel_diff,omitempty"`
}

// caseData is one case prepared for measurement.
type caseData struct {
	c       Case
	family  string
	kind    phaseboundpb.CurveKind
	xs      []float64
	direct  thermo.Correlation
	vLow    thermo.VolumeCorrelation // nil when the catalog gives none
	vHigh   thermo.VolumeCorrelation
	vapour  bool
	molar   float64
	table   *thermo.Table
	rng     thermo.Range // the branch's validity range, for TablePoints
	out     [3][]float64 // TablePoints' outputs, allocated once
	tvLow   *thermo.Table
	tvHigh  *thermo.Table
	vTmin   float64 // common range of the volume tables
	vTmax   float64
	latent  bool // the latent path applies
	served  float64
	tmin    float64
	tmax    float64
	samples map[string][]float64 // ns/point per repetition, by path
	allocs  float64              // heap allocations per point of the table loop
	copies  uint32               // Echo copies for the pressure path
	lcopies uint32               // and for the latent path
	respB   float64
	echoB   float64
	latB    float64
}

func (d *caseData) add(path string, ns float64) {
	d.samples[path] = append(d.samples[path], ns)
}

// Run measures every path on every case, Repeat times, and returns the
// medians, ratios and goals.
func Run(ctx context.Context, cfg Config) (*Report, error) {
	cfg = cfg.withDefaults()
	if cfg.Client == nil || cfg.Catalog == nil {
		return nil, errors.New("bench: Config needs a Client and the Catalog the server serves")
	}
	rep := &Report{
		PointsPerCase: cfg.Points, Points: cfg.Points * len(cfg.Cases), Repeat: cfg.Repeat,
		BatchPoints: cfg.Batch, UnaryCallers: cfg.Callers,
		GOMAXPROCS: runtime.GOMAXPROCS(0), GoVersion: runtime.Version(), RPCMatchesTable: true,
	}
	rng := rand.New(rand.NewPCG(cfg.Seed, 0x5eed))
	var cases []*caseData
	for _, c := range cfg.Cases {
		d, err := prepare(ctx, cfg, c, rng)
		if err != nil {
			return nil, err
		}
		cases = append(cases, d)
	}
	// Accuracy and agreement, once: table against the correlation, the
	// served values against the local table, the exact path against the
	// correlation.
	for _, d := range cases {
		cfg.Progress(fmt.Sprintf("checking %s", d.label()))
		if err := check(ctx, cfg, d, rep); err != nil {
			return nil, err
		}
	}
	var unary, echoUnary []float64
	for r := 0; r < cfg.Repeat; r++ {
		// Each repetition starts with another case, so that no case always
		// runs right after the unary measurement (or first).
		for k := range cases {
			d := cases[(k+r)%len(cases)]
			cfg.Progress(fmt.Sprintf("repetition %d/%d: %s", r+1, cfg.Repeat, d.label()))
			if err := measure(ctx, cfg, d); err != nil {
				return nil, err
			}
		}
		cfg.Progress(fmt.Sprintf("repetition %d/%d: unary calls, %d callers", r+1, cfg.Repeat, cfg.Callers))
		u, err := unaryRate(ctx, cfg, false)
		if err != nil {
			return nil, err
		}
		e, err := unaryRate(ctx, cfg, true)
		if err != nil {
			return nil, err
		}
		unary, echoUnary = append(unary, u), append(echoUnary, e)
	}
	rep.UnaryCPS, rep.EchoUnaryCPS = median(unary), median(echoUnary)
	summarise(cfg, cases, rep)
	return rep, nil
}

func (d *caseData) label() string {
	s := d.c.Substance + " " + d.c.Curve.String()
	if d.c.Branch != "" {
		s += " " + d.c.Branch
	}
	return s
}

// prepare finds the case's branch in the catalog and on the server, builds
// the direct correlations, loads the served tables and draws the data.
func prepare(ctx context.Context, cfg Config, c Case, rng *rand.Rand) (*caseData, error) {
	var sub *catalog.Substance
	for _, s := range cfg.Catalog.Substances {
		if s.ID == c.Substance {
			sub = s
		}
	}
	if sub == nil {
		return nil, fmt.Errorf("bench: the catalog has no substance %q", c.Substance)
	}
	var br *catalog.Branch
	for _, cv := range sub.Curves {
		if cv.Kind != c.Curve {
			continue
		}
		for _, b := range cv.Branches {
			if b.Name == c.Branch || (c.Branch == "" && len(cv.Branches) == 1) {
				br = b
			}
		}
	}
	if br == nil {
		return nil, fmt.Errorf("bench: substance %q has no %v branch %q", c.Substance, c.Curve, c.Branch)
	}
	fam, err := thermo.GetFamily(br.Family)
	if err != nil {
		return nil, fmt.Errorf("bench: %s: %w", c.Substance, err)
	}
	d := &caseData{c: c, family: br.Family, kind: server.KindProto(c.Curve), tmin: br.Tmin, tmax: br.Tmax,
		vapour: c.Curve == thermo.Saturation || c.Curve == thermo.Sublimation, molar: sub.MolarMass,
		samples: map[string][]float64{}}
	if d.direct, err = fam.New(br.Params, br.Tmin, br.Tmax); err != nil {
		return nil, fmt.Errorf("bench: %s: %w", d.label(), err)
	}
	if br.VolumeLow != nil && br.VolumeHigh != nil {
		if d.vLow, err = volume(*br.VolumeLow, br); err != nil {
			return nil, fmt.Errorf("bench: %s: %w", d.label(), err)
		}
		if d.vHigh, err = volume(*br.VolumeHigh, br); err != nil {
			return nil, fmt.Errorf("bench: %s: %w", d.label(), err)
		}
	}
	exp, err := cfg.Client.ExportTables(ctx, &phaseboundpb.ExportTablesRequest{Substance: c.Substance})
	if err != nil {
		return nil, fmt.Errorf("bench: export tables of %q: %w", c.Substance, err)
	}
	for _, bt := range exp.GetTables() {
		if bt.GetCurve() != d.kind || bt.GetBranch() != br.Name {
			continue
		}
		if d.table, err = loadTable(bt.GetPressure(), "temperature", "K"); err != nil {
			return nil, fmt.Errorf("bench: %s: P(T) table: %w", d.label(), err)
		}
		if bt.GetVolumeLowTPhase() != nil && bt.GetVolumeHighTPhase() != nil {
			if d.tvLow, err = loadTable(bt.GetVolumeLowTPhase(), "temperature", "K"); err != nil {
				return nil, err
			}
			if d.tvHigh, err = loadTable(bt.GetVolumeHighTPhase(), "temperature", "K"); err != nil {
				return nil, err
			}
			lo1, hi1 := d.tvLow.Domain()
			lo2, hi2 := d.tvHigh.Domain()
			d.vTmin, d.vTmax = math.Max(lo1, lo2), math.Min(hi1, hi2)
		}
	}
	if d.table == nil {
		return nil, fmt.Errorf("bench: the server exported no P(T) table for %s", d.label())
	}
	d.served = d.table.MaxRelError()
	d.rng = d.direct.Range()
	for k := range d.out {
		d.out[k] = make([]float64, cfg.Batch)
	}
	// The latent path is measured where the server gives a Clapeyron value
	// from volume tables (and the direct path has the volume correlations).
	d.latent = d.tvLow != nil && d.vLow != nil
	// Uniform temperatures strictly inside the range.
	d.xs = make([]float64, cfg.Points)
	lo, hi := d.tmin, d.tmax
	w := hi - lo
	for i := range d.xs {
		d.xs[i] = lo + w*(1e-9+(1-2e-9)*rng.Float64())
	}
	return d, nil
}

func volume(c catalog.Correlation, br *catalog.Branch) (thermo.VolumeCorrelation, error) {
	f, err := thermo.GetVolumeFamily(c.Family)
	if err != nil {
		return nil, err
	}
	return f.New(c.Params, br.Tmin, br.Tmax)
}

func loadTable(t *phaseboundpb.ChebyshevTable, q, unit string) (*thermo.Table, error) {
	if t == nil {
		return nil, errors.New("missing")
	}
	return thermo.LoadTable(thermo.TableData{
		XTransform: thermo.Transform(t.GetXTransform()), YTransform: thermo.Transform(t.GetYTransform()),
		Breaks: t.GetBreaks(), Offsets: t.GetOffsets(), Coeffs: t.GetCoefficients(),
		XMin: t.GetXMin(), XMax: t.GetXMax(), MaxRelError: t.GetMaxRelError(), XReference: t.GetXReference(),
	}, q, unit)
}

func relDiff(a, b float64) float64 {
	if b == 0 {
		return math.Abs(a - b)
	}
	return math.Abs(a-b) / math.Abs(b)
}

func (d *caseData) request(x []float64, exact, latent bool) *phaseboundpb.EvaluateRequest {
	return &phaseboundpb.EvaluateRequest{
		Substance: d.c.Substance, Curve: d.kind, Branch: d.c.Branch,
		Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: x,
		Exact: exact, IncludeLatentHeat: latent,
	}
}

// check measures the table error, compares the served values with the
// local table and the exact path with the correlation, and sizes the Echo
// payloads after the real Evaluate responses.
func check(ctx context.Context, cfg Config, d *caseData, rep *Report) error {
	f := &rep.Families
	fr := FamilyReport{Substance: d.c.Substance, Curve: d.c.Curve.String(), Branch: d.c.Branch, Family: d.family,
		Tmin: d.tmin, Tmax: d.tmax, Segments: d.table.Segments(), Coeffs: d.table.Coefficients(), ServedTableMaxRelError: d.served}
	for _, t := range d.xs {
		p, dp, err := d.direct.PressureSlope(t)
		if err != nil {
			return fmt.Errorf("bench: %s: direct at %g K: %w", d.label(), t, err)
		}
		tp, tdp, err := d.table.Eval(t)
		if err != nil {
			return fmt.Errorf("bench: %s: table at %g K: %w", d.label(), t, err)
		}
		fr.TableMaxRelError = math.Max(fr.TableMaxRelError, relDiff(tp, p))
		fr.TableMaxRelErrorSlope = math.Max(fr.TableMaxRelErrorSlope, relDiff(tdp, dp))
		if d.latent {
			h, err := d.directLatent(t)
			if err != nil {
				return fmt.Errorf("bench: %s: direct latent heat at %g K: %w", d.label(), t, err)
			}
			fr.LatentMaxRelDiff = math.Max(fr.LatentMaxRelDiff, relDiff(d.tableLatent(t), h))
		}
	}
	// Allocations of the table loop: the process-wide malloc count also
	// sees other goroutines (the gRPC connection), so the least of three
	// passes is taken.
	allocs := uint64(math.MaxUint64)
	for range 3 {
		var ms0, ms1 runtime.MemStats
		runtime.ReadMemStats(&ms0)
		var acc float64
		for _, t := range d.xs {
			p, dp, _ := d.table.Eval(t)
			acc += p + dp
		}
		runtime.ReadMemStats(&ms1)
		sinkF = acc
		allocs = min(allocs, ms1.Mallocs-ms0.Mallocs)
	}
	d.allocs = float64(allocs) / float64(len(d.xs))
	n := min(cfg.Batch, len(d.xs))
	x := d.xs[:n]
	resp, err := cfg.Client.Evaluate(ctx, d.request(x, false, false))
	if err != nil {
		return fmt.Errorf("bench: %s: Evaluate: %w", d.label(), err)
	}
	if err := allOK(resp, n); err != nil {
		return fmt.Errorf("bench: %s: %w", d.label(), err)
	}
	for i, t := range x {
		p, dp, _ := d.table.Eval(t)
		if resp.PressurePa[i] != p || resp.DpdtPaPerK[i] != dp {
			rep.RPCMatchesTable = false
		}
	}
	d.respB = float64(proto.Size(resp)) / float64(n)
	d.copies = uint32(max(1, math.Round(d.respB/8)))
	d.echoB = float64(proto.Size(&phaseboundpb.EchoResponse{Values: make([]float64, n*int(d.copies))})) / float64(n)
	ex, err := cfg.Client.Evaluate(ctx, d.request(x, true, false))
	if err != nil {
		return fmt.Errorf("bench: %s: exact Evaluate: %w", d.label(), err)
	}
	if err := allOK(ex, n); err != nil {
		return fmt.Errorf("bench: %s: exact path: %w", d.label(), err)
	}
	for i, t := range x {
		p, _ := d.direct.Pressure(t)
		fr.ExactMaxRelDiff = math.Max(fr.ExactMaxRelDiff, relDiff(ex.PressurePa[i], p))
	}
	if d.latent {
		lr, err := cfg.Client.Evaluate(ctx, d.request(x, false, true))
		if err != nil {
			return fmt.Errorf("bench: %s: Evaluate with latent heat: %w", d.label(), err)
		}
		if err := allOK(lr, n); err != nil {
			return fmt.Errorf("bench: %s: %w", d.label(), err)
		}
		for i, t := range x {
			if lr.LatentHeatJPerMol[i] != d.tableLatent(t) {
				rep.RPCMatchesTable = false
			}
		}
		d.latB = float64(proto.Size(lr)) / float64(n)
		d.lcopies = uint32(max(1, math.Round(d.latB/8)))
	}
	*f = append(*f, fr)
	return nil
}

// allOK checks that r answers all n points with no failure. The server
// answers such a batch in the compact form (status and branch_index empty,
// every point OK on branch_names[0]); a per-point answer is accepted too.
func allOK(r *phaseboundpb.EvaluateResponse, n int) error {
	if len(r.GetPressurePa()) != n || len(r.GetTemperatureK()) != n || len(r.GetDpdtPaPerK()) != n {
		return fmt.Errorf("server answered %d points for %d", len(r.GetPressurePa()), n)
	}
	if s := len(r.GetStatus()); s != 0 && s != n {
		return fmt.Errorf("server answered %d statuses for %d points", s, n)
	}
	if len(r.GetErrors()) > 0 {
		e := r.GetErrors()[0]
		return fmt.Errorf("%d failed points, first at %d: %s", len(r.GetErrors()), e.GetIndex(), e.GetMessage())
	}
	return nil
}

// directLatent is the latent heat from the correlations themselves:
// ΔH = T·(v_high − v_low)·dP/dT.
func (d *caseData) directLatent(t float64) (float64, error) {
	p, dp, err := d.direct.PressureSlope(t)
	if err != nil {
		return 0, err
	}
	vl, _, err := d.vLow.Volume(t, p)
	if err != nil {
		return 0, err
	}
	vh, _, err := d.vHigh.Volume(t, p)
	if err != nil {
		return 0, err
	}
	return t * (vh - vl) * dp, nil
}

// tableLatent is the same from the tables, as the server computes it (the
// volumes at T clamped into the volume tables' common range, which may
// stop a hair short of a critical point).
func (d *caseData) tableLatent(t float64) float64 {
	_, dp, _ := d.table.Eval(t)
	tc := math.Min(math.Max(t, d.vTmin), d.vTmax)
	vl, _ := d.tvLow.Value(tc)
	vh, _ := d.tvHigh.Value(tc)
	return t * (vh - vl) * dp
}

// Package-level sinks keep the compiler from dropping measured work.
var (
	sinkF float64
	sinkR *phaseboundpb.EvaluateResponse
	sinkE *phaseboundpb.EchoResponse
)

func nsPer(start time.Time, n int) float64 {
	return float64(time.Since(start).Nanoseconds()) / float64(n)
}

// measure runs one repetition of every path of one case.
func measure(ctx context.Context, cfg Config, d *caseData) error {
	n := len(d.xs)
	var acc float64
	t0 := time.Now()
	for _, t := range d.xs {
		p, dp, _ := d.direct.PressureSlope(t)
		acc += p + dp
	}
	d.add("direct", nsPer(t0, n))

	t0 = time.Now()
	for _, t := range d.xs {
		p, dp, _ := d.table.Eval(t)
		acc += p + dp
	}
	d.add("table", nsPer(t0, n))

	t0 = time.Now()
	for lo := 0; lo < n; lo += cfg.Batch {
		hi := min(n, lo+cfg.Batch)
		k := thermo.TablePoints(d.table, nil, d.rng, d.xs[lo:hi], true, d.out[0], d.out[1], d.out[2])
		if k != hi-lo {
			return fmt.Errorf("bench: %s: the batch table loop stopped at point %d (T = %g K)", d.label(), lo+k, d.xs[lo+k])
		}
		acc += d.out[1][0]
	}
	d.add("table_batch", nsPer(t0, n))

	if d.latent {
		t0 = time.Now()
		for _, t := range d.xs {
			h, _ := d.directLatent(t)
			acc += h
		}
		d.add("latent_direct", nsPer(t0, n))
		t0 = time.Now()
		for _, t := range d.xs {
			acc += d.tableLatent(t)
		}
		d.add("latent_table", nsPer(t0, n))
		t0 = time.Now()
		for _, t := range d.xs {
			tc := math.Min(math.Max(t, d.vTmin), d.vTmax)
			vl, _ := d.tvLow.Value(tc)
			vh, _ := d.tvHigh.Value(tc)
			acc += vh - vl
		}
		d.add("volumes", nsPer(t0, n))
	}
	sinkF = acc

	batches := func(path string, call func(x []float64) error) error {
		t0 := time.Now()
		for lo := 0; lo < n; lo += cfg.Batch {
			if err := call(d.xs[lo:min(lo+cfg.Batch, n)]); err != nil {
				return fmt.Errorf("bench: %s: %s: %w", d.label(), path, err)
			}
		}
		d.add(path, nsPer(t0, n))
		return nil
	}
	evaluate := func(exact, latent bool) func(x []float64) error {
		return func(x []float64) error {
			r, err := cfg.Client.Evaluate(ctx, d.request(x, exact, latent))
			if err != nil {
				return err
			}
			if len(r.GetErrors()) > 0 {
				return allOK(r, len(x))
			}
			sinkR = r
			return nil
		}
	}
	echo := func(copies uint32) func(x []float64) error {
		return func(x []float64) error {
			r, err := cfg.Client.Echo(ctx, &phaseboundpb.EchoRequest{Values: x, Copies: copies})
			if err == nil {
				sinkE = r
			}
			return err
		}
	}
	if err := batches("rpc", evaluate(false, false)); err != nil {
		return err
	}
	if err := batches("echo", echo(d.copies)); err != nil {
		return err
	}
	if d.latent {
		if err := batches("latent_rpc", evaluate(false, true)); err != nil {
			return err
		}
		if err := batches("latent_echo", echo(d.lcopies)); err != nil {
			return err
		}
	}
	if err := batches("exact", evaluate(true, false)); err != nil {
		return err
	}
	sinkR, sinkE = nil, nil
	return nil
}

// unaryRate runs cfg.Callers concurrent callers of single-point Evaluate
// (or, with echo, single-value Echo sized like its response) for
// cfg.UnaryDuration and returns completed calls per second.
func unaryRate(ctx context.Context, cfg Config, echo bool) (float64, error) {
	req := &phaseboundpb.EvaluateRequest{
		Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
		Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: []float64{300},
	}
	ereq := &phaseboundpb.EchoRequest{Values: []float64{300}, Copies: 3}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	var calls atomic.Int64
	var firstErr error
	var once sync.Once
	var wg sync.WaitGroup
	stop := time.Now().Add(cfg.UnaryDuration)
	t0 := time.Now()
	for range cfg.Callers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for time.Now().Before(stop) && ctx.Err() == nil {
				var err error
				if echo {
					_, err = cfg.Client.Echo(ctx, ereq)
				} else {
					_, err = cfg.Client.Evaluate(ctx, req)
				}
				if err != nil {
					once.Do(func() { firstErr = err; cancel() })
					return
				}
				calls.Add(1)
			}
		}()
	}
	wg.Wait()
	if firstErr != nil {
		what := "Evaluate"
		if echo {
			what = "Echo"
		}
		return 0, fmt.Errorf("bench: unary %s: %w", what, firstErr)
	}
	return float64(calls.Load()) / time.Since(t0).Seconds(), nil
}

func median(v []float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	s := slices.Clone(v)
	slices.Sort(s)
	m := len(s) / 2
	if len(s)%2 == 1 {
		return s[m]
	}
	return 0.5 * (s[m-1] + s[m])
}

// summarise fills the report's medians, ratios and goals.
func summarise(cfg Config, cases []*caseData, rep *Report) {
	// Aggregate per repetition (time over all points), then the median.
	agg := func(path string, only func(*caseData) bool) float64 {
		var per []float64
		for r := 0; r < cfg.Repeat; r++ {
			var sum float64
			var k int
			for _, d := range cases {
				if only != nil && !only(d) {
					continue
				}
				if s := d.samples[path]; r < len(s) {
					sum += s[r]
					k++
				}
			}
			if k > 0 {
				per = append(per, sum/float64(k))
			}
		}
		return median(per)
	}
	rep.DirectNs = agg("direct", nil)
	rep.TableNs = agg("table", nil)
	rep.TableBatchNs = agg("table_batch", nil)
	rep.RPCBatchNs = agg("rpc", nil)
	rep.EchoFloorNs = agg("echo", nil)
	rep.ExactNs = agg("exact", nil)
	var respB, echoB float64
	for i, d := range cases {
		fr := &rep.Families[i]
		fr.DirectNs = median(d.samples["direct"])
		fr.TableNs = median(d.samples["table"])
		fr.TableBatchNs = median(d.samples["table_batch"])
		fr.RPCBatchNs = median(d.samples["rpc"])
		fr.EchoFloorNs = median(d.samples["echo"])
		fr.ExactNs = median(d.samples["exact"])
		fr.TableOverDirect = fr.TableNs / fr.DirectNs
		fr.RPCOverEcho = fr.RPCBatchNs / fr.EchoFloorNs
		if d.latent {
			fr.LatentDirectNs = median(d.samples["latent_direct"])
			fr.LatentTableNs = median(d.samples["latent_table"])
			fr.LatentRPCBatchNs = median(d.samples["latent_rpc"])
			fr.LatentEchoNs = median(d.samples["latent_echo"])
		}
		rep.TableAllocsPerPoint = math.Max(rep.TableAllocsPerPoint, d.allocs)
		rep.TableMaxRelError = math.Max(rep.TableMaxRelError, fr.TableMaxRelError)
		rep.TableMaxRelErrorSlope = math.Max(rep.TableMaxRelErrorSlope, fr.TableMaxRelErrorSlope)
		rep.ServedTableMaxRelError = math.Max(rep.ServedTableMaxRelError, fr.ServedTableMaxRelError)
		respB += d.respB
		echoB += d.echoB
	}
	rep.EvaluateResponseBytesPerPoint = respB / float64(len(cases))
	rep.EchoResponseBytesPerPoint = echoB / float64(len(cases))

	lat := func(d *caseData) bool { return d.latent }
	l := &rep.Latent
	for _, d := range cases {
		if d.latent {
			l.Cases++
			l.ResponseBytesPerPoint += d.latB
		}
	}
	if l.Cases > 0 {
		l.ResponseBytesPerPoint /= float64(l.Cases)
		l.DirectNs, l.TableNs, l.RPCBatchNs = agg("direct", lat), agg("table", lat), agg("rpc", lat)
		l.LatentDirectNs, l.LatentTableNs = agg("latent_direct", lat), agg("latent_table", lat)
		l.LatentRPCBatchNs, l.LatentEchoFloorNs = agg("latent_rpc", lat), agg("latent_echo", lat)
		l.VolumeTablesNs = agg("volumes", lat)
		l.TableRatio = l.LatentTableNs / l.TableNs
		l.DirectRatio = l.LatentDirectNs / l.DirectNs
		l.RPCRatio = l.LatentRPCBatchNs / l.RPCBatchNs
		l.RPCOverEcho = l.LatentRPCBatchNs / l.LatentEchoFloorNs
		l.TableOverDirect = l.LatentTableNs / l.LatentDirectNs
	}

	rep.Ratios = Ratios{
		RPCOverEcho:           rep.RPCBatchNs / rep.EchoFloorNs,
		TableOverDirect:       rep.TableNs / rep.DirectNs,
		UnaryOverEcho:         rep.UnaryCPS / rep.EchoUnaryCPS,
		ExactOverRPC:          rep.ExactNs / rep.RPCBatchNs,
		RPCOverTable:          rep.RPCBatchNs / rep.TableNs,
		EchoPlusTableOverEcho: (rep.EchoFloorNs + rep.TableBatchNs) / rep.EchoFloorNs,
	}
	rep.Goals = Goals{
		RPCOverEcho:     goal(rep.Ratios.RPCOverEcho, GoalRPCOverEcho, true),
		TableOverDirect: goal(rep.Ratios.TableOverDirect, GoalTableOverDirect, true),
		TableAllocs:     goal(rep.TableAllocsPerPoint, 0, true),
		TableError:      goal(rep.TableMaxRelError, GoalTableError, true),
		UnaryOverEcho:   goal(rep.Ratios.UnaryOverEcho, GoalUnaryOverEcho, false),
	}
	g := rep.Goals
	rep.AllMet = g.RPCOverEcho.Met && g.TableOverDirect.Met && g.TableAllocs.Met && g.TableError.Met && g.UnaryOverEcho.Met
}
