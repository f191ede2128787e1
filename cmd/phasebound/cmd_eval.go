package main

import (
	"bufio"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/phasebound/phasebound/clients/goclient"
	"github.com/phasebound/phasebound/clients/units"
	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/thermo"
)

func init() { register(newEvalCmd) }

// evalFlags are the flags of eval.
type evalFlags struct {
	substance, curve, branch string
	temperature, pressure    string
	exact, extrapolate       bool
	input, output, column    string
	chunk                    int
}

func newEvalCmd(a *app) *cobra.Command {
	var f evalFlags
	cmd := &cobra.Command{
		Use:   "eval --substance ID --curve KIND [--branch NAME] (--temperature V | --pressure V)",
		Short: "Evaluate P(T) or T(P) on a curve, with slope dP/dT and latent heat",
		Long: `eval gives the pressure at a temperature (--temperature) or the temperature
at a pressure (--pressure) on one coexistence curve of a substance, with
the slope dP/dT and, where the catalog gives the coexisting-phase volumes,
the latent heat by the Clapeyron equation (on vapour curves without volumes,
the ideal-gas Clausius-Clapeyron estimate, marked as such).

Values take unit suffixes: 298.15, 298.15K, 25degC, 77degF; 101325, 2bar,
200MPa, 1atm, 14.7psi. Output is SI (K, Pa, Pa/K, J/mol, J/kg, m^3/mol).

Batch: --input IN.csv with a column temperature_k or pressure_pa, and
--output OUT.csv (or - for stdout): one output row per input row, in order,
with temperature_k, pressure_pa, dpdt_pa_per_k, branch, status and the
latent-heat columns; bad rows keep their place with the reason in status.
Files of any size are streamed in chunks. OUT.csv appears (or is replaced)
only when the whole batch succeeded; a batch that fails half-way leaves no
partial file behind.

Results come from the server's compiled tables (their measured error
against the correlation is reported); --exact evaluates the correlation
itself. Outside a validity range the answer is an error, unless
--extrapolate is given: then the result is marked extrapolated and has no
stated accuracy.

CAUTION: each curve is only as good as its correlation ('phasebound
substances' lists validity ranges, uncertainties and provenance). Results
are not a substitute for design codes; defer to local codes and licensed
engineers.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if f.input != "" {
				return a.evalBatch(cmd.Context(), f)
			}
			return a.evalPoint(cmd.Context(), f)
		},
	}
	fl := cmd.Flags()
	fl.StringVar(&f.substance, "substance", "", "substance id (see 'phasebound substances')")
	fl.StringVar(&f.curve, "curve", "", "curve kind: saturation, melting, sublimation, transition")
	fl.StringVar(&f.branch, "branch", "", "branch name (e.g. ice-III); default: chosen by the value")
	fl.StringVar(&f.temperature, "temperature", "", "temperature, e.g. 300, 300K, 25degC: gives P(T)")
	fl.StringVar(&f.pressure, "pressure", "", "pressure, e.g. 101325, 2bar, 200MPa, 1atm: gives T(P)")
	fl.BoolVar(&f.exact, "exact", false, "evaluate the correlation itself instead of the compiled tables")
	fl.BoolVar(&f.extrapolate, "extrapolate", false, "evaluate outside the validity range (results marked extrapolated)")
	fl.StringVar(&f.input, "input", "", "batch input CSV with a temperature_k or pressure_pa column")
	fl.StringVar(&f.output, "output", "", "batch output CSV (- for stdout)")
	fl.StringVar(&f.column, "column", "", "batch input column to evaluate when the file has both: temperature_k or pressure_pa")
	fl.IntVar(&f.chunk, "chunk", 1<<16, "batch rows per request")
	_ = fl.MarkHidden("chunk")
	return cmd
}

// request builds the request common to a point and a batch.
func (f evalFlags) request() (*pb.EvaluateRequest, error) {
	if f.substance == "" {
		return nil, errors.New("eval needs --substance ID (see 'phasebound substances')")
	}
	if f.curve == "" {
		return nil, errors.New("eval needs --curve KIND (valid: saturation, melting, sublimation, transition)")
	}
	kind, err := thermo.ParseCurveKind(f.curve)
	if err != nil {
		return nil, fmt.Errorf("--curve %q: unknown curve kind (valid: saturation, melting, sublimation, transition)", f.curve)
	}
	return &pb.EvaluateRequest{
		Substance: f.substance, Curve: server.KindProto(kind), Branch: f.branch,
		Exact: f.exact, AllowExtrapolation: f.extrapolate, IncludeLatentHeat: true,
	}, nil
}

// evalResult is the JSON form of one evaluated point.
type evalResult struct {
	Substance   string   `json:"substance"`
	Curve       string   `json:"curve"`
	Branch      string   `json:"branch"`
	Temperature float64  `json:"temperature_k"`
	Pressure    float64  `json:"pressure_pa"`
	Slope       float64  `json:"dpdt_pa_per_k"`
	LatentMol   *float64 `json:"latent_heat_j_per_mol,omitempty"`
	LatentKg    *float64 `json:"latent_heat_j_per_kg,omitempty"`
	VolumeLow   *float64 `json:"volume_low_t_phase_m3_per_mol,omitempty"`
	VolumeHigh  *float64 `json:"volume_high_t_phase_m3_per_mol,omitempty"`
	LatentFrom  string   `json:"latent_heat_source,omitempty"`
	SolidForm   string   `json:"solid_form,omitempty"`
	Exact       bool     `json:"exact"`
	Extrapol    bool     `json:"extrapolated"`
	TableError  float64  `json:"table_max_rel_error"`
	Catalog     string   `json:"catalog_version"`
}

func finite(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// latentSourceName is the JSON and CSV name of a latent-heat source.
func latentSourceName(s pb.LatentHeatSource) string {
	switch s {
	case pb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON:
		return "clapeyron"
	case pb.LatentHeatSource_LATENT_HEAT_SOURCE_IDEAL_GAS_ESTIMATE:
		return "ideal-gas-estimate"
	case pb.LatentHeatSource_LATENT_HEAT_SOURCE_NO_VOLUMES:
		return "no-volumes"
	case pb.LatentHeatSource_LATENT_HEAT_SOURCE_POINT_FAILED:
		return "point-failed"
	}
	return ""
}

func (a *app) evalPoint(ctx context.Context, f evalFlags) error {
	req, err := f.request()
	if err != nil {
		return err
	}
	switch {
	case f.temperature != "" && f.pressure != "":
		return errors.New("give either --temperature (for P(T)) or --pressure (for T(P)), not both")
	case f.temperature != "":
		t, err := units.ParseTemperature(f.temperature)
		if err != nil {
			return fmt.Errorf("--temperature: %w", err)
		}
		req.Given, req.Values = pb.Variable_VARIABLE_TEMPERATURE, []float64{t}
	case f.pressure != "":
		p, err := units.ParsePressure(f.pressure)
		if err != nil {
			return fmt.Errorf("--pressure: %w", err)
		}
		req.Given, req.Values = pb.Variable_VARIABLE_PRESSURE, []float64{p}
	default:
		return errors.New("eval needs --temperature V (for P(T)) or --pressure V (for T(P)), or --input FILE.csv for a batch")
	}
	req.Strict = true
	c, done, err := a.connect(ctx)
	if err != nil {
		return err
	}
	defer done()
	resp, err := c.Evaluate(ctx, req)
	if err != nil {
		err = a.rpcError(err)
		if strings.Contains(err.Error(), "several branches") {
			err = fmt.Errorf("%w (with --branch)", err)
		}
		return err
	}
	desc, err := c.DescribeSubstance(ctx, f.substance)
	if err != nil {
		return a.rpcError(err)
	}
	kind, _ := server.KindFromProto(req.Curve)
	r := evalResult{
		Substance: f.substance, Curve: kind.String(),
		Branch:      resp.BranchNames[resp.BranchIndex[0]],
		Temperature: resp.TemperatureK[0], Pressure: resp.PressurePa[0], Slope: resp.DpdtPaPerK[0],
		Exact: resp.Exact, Extrapol: resp.Status[0] == pb.PointStatus_POINT_STATUS_EXTRAPOLATED,
		TableError: resp.TableMaxRelError, Catalog: resp.CatalogVersion,
	}
	if len(resp.LatentHeatSource) == 1 {
		src := resp.LatentHeatSource[0]
		if src == pb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON || src == pb.LatentHeatSource_LATENT_HEAT_SOURCE_IDEAL_GAS_ESTIMATE {
			r.LatentMol, r.LatentKg = finite(resp.LatentHeatJPerMol[0]), finite(resp.LatentHeatJPerKg[0])
			r.VolumeLow, r.VolumeHigh = finite(resp.VolumeLowTPhaseM3PerMol[0]), finite(resp.VolumeHighTPhaseM3PerMol[0])
		}
		r.LatentFrom = latentSourceName(src)
	}
	var br *pb.Branch
	for _, cv := range desc.GetSubstance().GetCurves() {
		if cv.Kind == req.Curve {
			for _, b := range cv.Branches {
				if b.Name == r.Branch {
					br = b
				}
			}
		}
	}
	if br != nil {
		r.SolidForm = br.SolidForm
	}
	if a.jsonOut {
		return writeJSON(a.stdout, r)
	}
	a.printEval(r, desc.GetSubstance(), br)
	return nil
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

func (a *app) printEval(r evalResult, sub *pb.Substance, br *pb.Branch) {
	w := a.stdout
	name := r.Substance
	if sub.GetName() != "" {
		name = sub.GetName() + " (" + r.Substance + ")"
	}
	branch := ""
	if r.Branch != "" {
		branch = ", branch " + r.Branch
	}
	fmt.Fprintf(w, "%s, %s curve%s\n", name, r.Curve, branch)
	fmt.Fprintf(w, "  temperature      %-16.10g K      (%.4f °C)\n", r.Temperature, r.Temperature-273.15)
	fmt.Fprintf(w, "  pressure         %-16.10g Pa     (%s)\n", r.Pressure, humanPressure(r.Pressure))
	fmt.Fprintf(w, "  slope dP/dT      %-16.10g Pa/K\n", r.Slope)
	if r.LatentMol != nil {
		how := "Clapeyron equation with both phase volumes"
		if r.LatentFrom == "ideal-gas-estimate" {
			how = "ideal-gas Clausius-Clapeyron estimate: condensed-phase volume neglected, a few per cent high near the triple point and wrong near the critical point"
		}
		fmt.Fprintf(w, "  latent heat      %-16.10g J/mol  (%.6g kJ/kg; %s)\n", *r.LatentMol, derefOr(r.LatentKg)/1e3, how)
	} else if r.LatentFrom == "no-volumes" {
		fmt.Fprintf(w, "  latent heat      not available: the catalog gives no phase volumes for this curve\n")
	}
	if r.VolumeLow != nil && r.VolumeHigh != nil {
		fmt.Fprintf(w, "  phase volumes    %.6g (below) / %.6g (above) m^3/mol\n", *r.VolumeLow, *r.VolumeHigh)
	}
	if r.Exact {
		fmt.Fprintf(w, "  evaluated by     the correlation itself (--exact)\n")
	} else {
		fmt.Fprintf(w, "  evaluated by     compiled table, measured max relative error %.2g\n", r.TableError)
	}
	if br != nil {
		fmt.Fprintf(w, "  correlation      %s, valid %g to %g K", br.Family, br.GetValidity().GetMinTemperatureK(), br.GetValidity().GetMaxTemperatureK())
		if br.Uncertainty != "" {
			fmt.Fprintf(w, "; uncertainty: %s", br.Uncertainty)
		}
		fmt.Fprintln(w)
		if br.GetProvenance().GetKind() == pb.ProvenanceKind_PROVENANCE_KIND_INVENTED {
			fmt.Fprintf(w, "  CAUTION          invented demonstration data: never use for design\n")
		}
	}
	if r.Extrapol {
		fmt.Fprintf(w, "  CAUTION          extrapolated outside the validity range: no stated accuracy\n")
	}
	fmt.Fprintf(w, "Not a substitute for design codes; defer to local codes and licensed engineers.\n")
}

func derefOr(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// humanPressure writes p with a convenient SI prefix.
func humanPressure(p float64) string {
	switch a := math.Abs(p); {
	case a >= 1e9:
		return fmt.Sprintf("%.6g GPa", p/1e9)
	case a >= 1e6:
		return fmt.Sprintf("%.6g MPa", p/1e6)
	case a >= 1e3:
		return fmt.Sprintf("%.6g kPa", p/1e3)
	}
	return fmt.Sprintf("%.6g Pa", p)
}

// batchColumns are the output columns of a batch, in order.
var batchColumns = []string{
	"temperature_k", "pressure_pa", "dpdt_pa_per_k", "branch", "status",
	"latent_heat_j_per_mol", "latent_heat_j_per_kg",
	"volume_low_t_phase_m3_per_mol", "volume_high_t_phase_m3_per_mol", "latent_heat_source",
}

// batchSummary is the JSON report of a batch.
type batchSummary struct {
	Input  string `json:"input"`
	Output string `json:"output"`
	Rows   int    `json:"rows"`
	OK     int    `json:"ok"`
	Failed int    `json:"failed"`
}

func (a *app) evalBatch(ctx context.Context, f evalFlags) error {
	if f.temperature != "" || f.pressure != "" {
		return errors.New("--input reads the values from the file: drop --temperature and --pressure")
	}
	if f.output == "" {
		return errors.New("--input needs --output OUT.csv (or --output - for stdout)")
	}
	if f.chunk < 1 {
		return fmt.Errorf("--chunk %d must be positive", f.chunk)
	}
	req, err := f.request()
	if err != nil {
		return err
	}
	in, size, err := openInput(a, f.input)
	if err != nil {
		return err
	}
	defer in.Close()
	var out io.Writer = a.stdout
	var outFile *pendingFile
	if f.output != "-" {
		// Rows go to a temporary file beside the output, renamed over it
		// only once the whole batch succeeded: a batch that fails half-way
		// leaves no partial file (and an earlier output untouched).
		outFile, err = createPending(f.output)
		if err != nil {
			return fmt.Errorf("--output: %w", err)
		}
		defer outFile.discard()
		out = outFile.f
	}

	var src io.Reader = in
	if bar := a.progress(size); bar != nil {
		defer bar.Finish()
		r := progressbar.NewReader(in, bar)
		src = &r
	}
	cr := csv.NewReader(bufio.NewReaderSize(src, 1<<20))
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	cr.Comment = '#'
	header, err := cr.Read()
	if err != nil {
		return fmt.Errorf("--input %s: cannot read the CSV header: %v", f.input, err)
	}
	if f.column != "" && f.column != "temperature_k" && f.column != "pressure_pa" {
		return fmt.Errorf("--column %q (valid: temperature_k, pressure_pa)", f.column)
	}
	tcol, pcol := -1, -1
	for i, h := range header {
		switch strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")) {
		case "temperature_k":
			tcol = i
		case "pressure_pa":
			pcol = i
		}
	}
	col, byT := pcol, false
	switch {
	case f.column == "temperature_k" || (f.column == "" && pcol < 0):
		col, byT = tcol, true
	case f.column == "" && tcol >= 0:
		return fmt.Errorf("--input %s has both temperature_k and pressure_pa columns: say which to evaluate with --column temperature_k (P(T)) or --column pressure_pa (T(P))", f.input)
	}
	if col < 0 {
		want := "a temperature_k or pressure_pa column"
		if f.column != "" {
			want = "the column " + f.column
		}
		return fmt.Errorf("--input %s has no %s (header: %s)", f.input, want, strings.Join(header, ","))
	}
	req.Given = pb.Variable_VARIABLE_PRESSURE
	if byT {
		req.Given = pb.Variable_VARIABLE_TEMPERATURE
	}

	c, done, err := a.connect(ctx)
	if err != nil {
		return err
	}
	defer done()
	cw := csv.NewWriter(out)
	if err := cw.Write(batchColumns); err != nil {
		return err
	}
	b := &batch{a: a, c: c, req: req, byT: byT, cw: cw, col: col}
	b.rows = make([]batchRow, 0, f.chunk)
	line := 1
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		line++
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			b.rows = append(b.rows, batchRow{bad: "invalid: " + pe.Err.Error()})
		} else if err != nil {
			return fmt.Errorf("--input %s: %v", f.input, err)
		} else {
			b.add(rec)
		}
		if len(b.rows) == f.chunk {
			if err := b.flush(ctx); err != nil {
				return err
			}
		}
	}
	if err := b.flush(ctx); err != nil {
		return err
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("--output: %w", err)
	}
	if outFile != nil {
		if err := outFile.commit(); err != nil {
			return fmt.Errorf("--output: %w", err)
		}
	}
	sum := batchSummary{Input: f.input, Output: f.output, Rows: b.total, OK: b.total - b.failed, Failed: b.failed}
	if a.jsonOut && f.output != "-" {
		return writeJSON(a.stdout, sum)
	}
	msg := fmt.Sprintf("eval: %d rows, %d ok, %d failed (see the status column)", sum.Rows, sum.OK, sum.Failed)
	if f.output != "-" {
		msg += ", written to " + f.output
	}
	fmt.Fprintln(a.stderr, msg)
	return nil
}

// pendingFile is an output written under a temporary name in the target's
// folder and renamed to the target by commit.
type pendingFile struct {
	f      *os.File
	target string
	done   bool
}

// createPending creates the temporary file for target. It gets the mode
// of an existing target, else 0644.
func createPending(target string) (*pendingFile, error) {
	mode := os.FileMode(0o644)
	if fi, err := os.Stat(target); err == nil {
		if !fi.Mode().IsRegular() {
			return nil, fmt.Errorf("%s exists and is not a regular file", target)
		}
		mode = fi.Mode().Perm()
	}
	f, err := os.CreateTemp(filepath.Dir(target), "."+filepath.Base(target)+".*.tmp")
	if err != nil {
		return nil, err
	}
	if err := f.Chmod(mode); err != nil {
		f.Close()
		os.Remove(f.Name())
		return nil, err
	}
	return &pendingFile{f: f, target: target}, nil
}

// commit closes the temporary file and renames it to the target.
func (p *pendingFile) commit() error {
	if err := p.f.Close(); err != nil {
		return err
	}
	if err := os.Rename(p.f.Name(), p.target); err != nil {
		return err
	}
	p.done = true
	return nil
}

// discard removes the temporary file unless commit succeeded.
func (p *pendingFile) discard() {
	if p.done {
		return
	}
	p.f.Close()
	os.Remove(p.f.Name())
}

// openInput opens the batch input ("-" is stdin) and returns its size in
// bytes when known (else -1).
func openInput(a *app, path string) (io.ReadCloser, int64, error) {
	if path == "-" {
		return io.NopCloser(a.stdin), -1, nil
	}
	fh, err := os.Open(path)
	if err != nil {
		return nil, 0, fmt.Errorf("--input: %w", err)
	}
	size := int64(-1)
	if st, err := fh.Stat(); err == nil && st.Mode().IsRegular() {
		size = st.Size()
	}
	return fh, size, nil
}

// largeBatchBytes is the input size above which a batch shows its progress
// even when stderr is not a terminal.
const largeBatchBytes = 64 << 20

// progress returns a progress bar over the input bytes on stderr when
// stderr is a terminal or the input is large, else nil.
func (a *app) progress(size int64) *progressbar.ProgressBar {
	if size <= 0 {
		return nil
	}
	tty := false
	if fh, ok := a.stderr.(*os.File); ok {
		tty = term.IsTerminal(int(fh.Fd()))
	}
	if !tty && size < largeBatchBytes {
		return nil
	}
	return progressbar.NewOptions64(size,
		progressbar.OptionSetWriter(a.stderr),
		progressbar.OptionSetDescription("evaluating"),
		progressbar.OptionShowBytes(true),
		progressbar.OptionThrottle(200*time.Millisecond),
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionClearOnFinish(),
	)
}

// batchRow is one input row: a value to evaluate, or the reason it cannot be.
type batchRow struct {
	x   float64
	raw string
	bad string // "" when x is to be evaluated
}

// batch accumulates rows and writes them out a chunk at a time.
type batch struct {
	a      *app
	c      *goclient.Client
	req    *pb.EvaluateRequest
	byT    bool
	col    int
	cw     *csv.Writer
	rows   []batchRow
	vals   []float64
	out    []string
	total  int
	failed int
}

func (b *batch) add(rec []string) {
	if b.col >= len(rec) || strings.TrimSpace(rec[b.col]) == "" {
		b.rows = append(b.rows, batchRow{bad: "invalid: missing value"})
		return
	}
	raw := strings.TrimSpace(rec[b.col])
	var x float64
	var err error
	if b.byT {
		x, err = units.ParseTemperature(raw)
	} else {
		x, err = units.ParsePressure(raw)
	}
	if err != nil {
		b.rows = append(b.rows, batchRow{raw: raw, bad: "invalid: " + strings.TrimPrefix(err.Error(), "units: ")})
		return
	}
	b.rows = append(b.rows, batchRow{x: x, raw: raw})
}

func fmtFloat(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return ""
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

var statusNames = map[pb.PointStatus]string{
	pb.PointStatus_POINT_STATUS_OK:               "ok",
	pb.PointStatus_POINT_STATUS_INVALID:          "invalid",
	pb.PointStatus_POINT_STATUS_OUT_OF_RANGE:     "out-of-range",
	pb.PointStatus_POINT_STATUS_AMBIGUOUS_BRANCH: "ambiguous-branch",
	pb.PointStatus_POINT_STATUS_EXTRAPOLATED:     "extrapolated",
	pb.PointStatus_POINT_STATUS_UNAVAILABLE:      "unavailable",
}

// flush evaluates the buffered rows and writes them in order.
func (b *batch) flush(ctx context.Context) error {
	if len(b.rows) == 0 {
		return nil
	}
	b.vals = b.vals[:0]
	for _, r := range b.rows {
		if r.bad == "" {
			b.vals = append(b.vals, r.x)
		}
	}
	var resp *pb.EvaluateResponse
	if len(b.vals) > 0 {
		b.req.Values = b.vals
		var err error
		resp, err = b.c.EvaluateAll(ctx, b.req)
		if err != nil {
			return b.a.rpcError(err)
		}
	}
	msgs := map[uint32]string{}
	if resp != nil {
		for _, e := range resp.Errors {
			msgs[e.Index] = e.Message
		}
	}
	if cap(b.out) < len(batchColumns) {
		b.out = make([]string, len(batchColumns))
	}
	k := 0
	for _, r := range b.rows {
		o := b.out[:len(batchColumns)]
		for i := range o {
			o[i] = ""
		}
		if r.bad != "" {
			if b.byT {
				o[0] = r.raw
			} else {
				o[1] = r.raw
			}
			o[4] = r.bad
			b.failed++
		} else {
			o[0], o[1], o[2] = fmtFloat(resp.TemperatureK[k]), fmtFloat(resp.PressurePa[k]), fmtFloat(resp.DpdtPaPerK[k])
			o[3] = resp.BranchNames[resp.BranchIndex[k]]
			st := resp.Status[k]
			o[4] = statusNames[st]
			if m, ok := msgs[uint32(k)]; ok {
				o[4] += ": " + m
				b.failed++
			}
			if len(resp.LatentHeatSource) > k {
				o[5], o[6] = fmtFloat(resp.LatentHeatJPerMol[k]), fmtFloat(resp.LatentHeatJPerKg[k])
				o[7], o[8] = fmtFloat(resp.VolumeLowTPhaseM3PerMol[k]), fmtFloat(resp.VolumeHighTPhaseM3PerMol[k])
				o[9] = latentSourceName(resp.LatentHeatSource[k])
			}
			k++
		}
		if err := b.cw.Write(o); err != nil {
			return fmt.Errorf("--output: %w", err)
		}
	}
	b.total += len(b.rows)
	b.rows = b.rows[:0]
	b.cw.Flush()
	return b.cw.Error()
}
