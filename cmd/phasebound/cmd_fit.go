package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"github.com/phasebound/phasebound/clients/plot"
	"github.com/phasebound/phasebound/clients/units"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

func init() { register(newFitCmd) }

const fitLong = `Fit a correlation family to measured (T, P) points by weighted least squares
on relative deviations, and optionally write the result as a catalog file that
every command accepts with --catalog.

The data file is CSV with a header line naming the columns temperature_k,
pressure_pa and optionally weight (other columns are ignored; blank lines and
lines starting with # are skipped). Cells are plain SI numbers (K, Pa): unit
suffixes such as 25degC or 2bar are NOT accepted in data files, so that a file
means the same thing to every tool that reads it.

Families: ` + "%s" + `. Parameters that are not fitted (reference points such as
t0, t_ref, p_ref, and exponent lists) are given with --fixed, e.g.
  --fixed t0=273.16,p0=611.657      --fixed 'b=3;25.75;103.75'
(list values separated by ';').

The fitted validity range is the data's temperature range; --tmin/--tmax widen
it explicitly (extrapolating a fit is at your own risk).

--out writes a catalog holding the substance with the fitted curve or branch
(copied from the loaded catalog when the substance is there, with just that
curve/branch replaced; otherwise a new substance, which needs --molar-mass).
The file says include_default = true, so loading it with --catalog serves the
embedded default catalog plus this substance (same id replaces). Its provenance
records the data file's name and SHA-256, the date (UTC) and the family.

CAUTION: a fit is only as good as its data; check it with 'phasebound check'
and look at the residuals (--plot). Fitted curves are not a substitute for
design codes: follow the applicable local codes and have designs checked by a
licensed engineer.`

type fitFlags struct {
	substance, curve, branch, family string
	data, out, fixed, plotOut        string
	tmin, tmax                       string
	molarMass                        float64
	name                             string
	fitExponents                     bool
}

func newFitCmd(a *app) *cobra.Command {
	var f fitFlags
	cmd := &cobra.Command{
		Use:   "fit --substance ID --curve KIND [--branch NAME] --family NAME --data IN.csv [--out CATALOG.toml]",
		Short: "Fit a correlation to measured points and write a catalog",
		Long:  fmt.Sprintf(fitLong, strings.Join(thermo.FitFamilies(), ", ")),
		Args:  cobra.NoArgs,
		RunE:  func(cmd *cobra.Command, _ []string) error { return a.runFit(&f) },
	}
	fl := cmd.Flags()
	fl.StringVar(&f.substance, "substance", "", "substance id ([a-z0-9-]+)")
	fl.StringVar(&f.curve, "curve", "", "curve kind: saturation, melting, sublimation or transition")
	fl.StringVar(&f.branch, "branch", "", "branch name (e.g. ice-Ih); needed when the curve has several")
	fl.StringVar(&f.family, "family", "", "correlation family to fit")
	fl.StringVar(&f.data, "data", "", "CSV file: temperature_k,pressure_pa[,weight], SI numbers only")
	fl.StringVar(&f.out, "out", "", "write the fitted substance as a catalog file (TOML)")
	fl.StringVar(&f.fixed, "fixed", "", "parameters held fixed: name=value[,name=v1;v2;...]")
	fl.StringVar(&f.tmin, "tmin", "", "widen the validity range down to this temperature (e.g. 250, -20degC)")
	fl.StringVar(&f.tmax, "tmax", "", "widen the validity range up to this temperature")
	fl.StringVar(&f.plotOut, "plot", "", "draw the residuals to this file (.png or .svg)")
	fl.Float64Var(&f.molarMass, "molar-mass", 0, "molar mass in kg/mol (needed for a substance not in the catalog)")
	fl.StringVar(&f.name, "name", "", "display name of a new substance")
	fl.BoolVar(&f.fitExponents, "fit-exponents", false, "also fit the exponents of the reduced power-sum forms and wagner")
	return cmd
}

// dataPoint is one row of a measurement file.
type dataPoint struct {
	t, p, w float64
	line    int
}

// readDataCSV reads temperature_k,pressure_pa[,weight] rows. Errors name
// the file and line.
func readDataCSV(path string) ([]dataPoint, []byte, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, fmt.Errorf("data: %w", err)
	}
	pts, err := parseDataCSV(filepath.Base(path), raw)
	if err != nil {
		return nil, nil, err
	}
	return pts, raw, nil
}

// parseDataCSV parses the bytes of a measurement file called name.
func parseDataCSV(name string, raw []byte) ([]dataPoint, error) {
	r := csv.NewReader(bytes.NewReader(raw))
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	r.Comment = '#'
	ti, pi, wi := -1, -1, -1
	var pts []dataPoint
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("data %s: %w", name, err) // a *csv.ParseError names the line
		}
		line, _ := r.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		if ti < 0 {
			for i, h := range rec {
				switch strings.ToLower(strings.TrimSpace(h)) {
				case "temperature_k":
					ti = i
				case "pressure_pa":
					pi = i
				case "weight":
					wi = i
				}
			}
			if ti < 0 || pi < 0 {
				return nil, fmt.Errorf("data %s line %d: the header must name the columns temperature_k and pressure_pa (and optionally weight), got %q",
					name, line, strings.Join(rec, ","))
			}
			continue
		}
		cell := func(col int, what string, required bool) (float64, error) {
			if col >= len(rec) || strings.TrimSpace(rec[col]) == "" {
				if !required {
					return 0, nil
				}
				return 0, fmt.Errorf("data %s line %d: %s is missing", name, line, what)
			}
			s := strings.TrimSpace(rec[col])
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				if _, _, uerr := units.Parse(s); uerr == nil {
					return 0, fmt.Errorf("data %s line %d: %s %q has a unit suffix; data files take plain SI numbers only (K, Pa)", name, line, what, s)
				}
				return 0, fmt.Errorf("data %s line %d: %s %q is not a number", name, line, what, s)
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, fmt.Errorf("data %s line %d: %s is %v; want a finite number", name, line, what, v)
			}
			return v, nil
		}
		var q dataPoint
		q.line = line
		if q.t, err = cell(ti, "temperature_k", true); err != nil {
			return nil, err
		}
		if q.p, err = cell(pi, "pressure_pa", true); err != nil {
			return nil, err
		}
		if wi >= 0 {
			if q.w, err = cell(wi, "weight", false); err != nil {
				return nil, err
			}
		}
		switch {
		case q.t <= 0:
			return nil, fmt.Errorf("data %s line %d: temperature_k %g must be > 0 K", name, line, q.t)
		case q.p <= 0:
			return nil, fmt.Errorf("data %s line %d: pressure_pa %g must be > 0 Pa", name, line, q.p)
		case q.w < 0:
			return nil, fmt.Errorf("data %s line %d: weight %g must be ≥ 0", name, line, q.w)
		}
		pts = append(pts, q)
	}
	if ti < 0 {
		return nil, fmt.Errorf("data %s: empty file; want a header temperature_k,pressure_pa[,weight] and data rows", name)
	}
	if len(pts) == 0 {
		return nil, fmt.Errorf("data %s: no data rows after the header", name)
	}
	return pts, nil
}

// parseFixed reads name=value[,name=v1;v2;...].
func parseFixed(s string) (thermo.Params, error) {
	p := thermo.Params{}
	if strings.TrimSpace(s) == "" {
		return p, nil
	}
	for _, item := range strings.Split(s, ",") {
		item = strings.TrimSpace(item)
		if item == "" {
			continue
		}
		k, v, ok := strings.Cut(item, "=")
		k = strings.TrimSpace(k)
		if !ok || k == "" {
			return nil, fmt.Errorf("--fixed: %q is not name=value (lists: name=v1;v2;...)", item)
		}
		var vals []float64
		for _, x := range strings.Split(v, ";") {
			f, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
			if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
				return nil, fmt.Errorf("--fixed: %s: %q is not a finite number (SI units)", k, x)
			}
			vals = append(vals, f)
		}
		if _, dup := p[k]; dup {
			return nil, fmt.Errorf("--fixed: %s given twice", k)
		}
		p[k] = vals
	}
	return p, nil
}

// jsonParams turns parameters into JSON values: a number for a scalar, a
// list otherwise; NaN and ±Inf become null.
func jsonParams(p thermo.Params) map[string]any {
	out := make(map[string]any, len(p))
	for k, v := range p {
		if len(v) == 1 {
			out[k] = jsonNumber(v[0])
			continue
		}
		l := make([]any, len(v))
		for i, x := range v {
			l[i] = jsonNumber(x)
		}
		out[k] = l
	}
	return out
}

func jsonNumber(x float64) any {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return x
}

// fitReport is the JSON output of fit. The first six fields are the
// command-line contract; the rest are extensions.
type fitReport struct {
	Family          string         `json:"family"`
	Parameters      map[string]any `json:"parameters"`
	ParameterStdErr map[string]any `json:"parameter_std_err"`
	NPoints         int            `json:"n_points"`
	RMSRelDev       float64        `json:"rms_rel_dev"`
	MaxRelDev       float64        `json:"max_rel_dev"`

	MaxRelDevLine int       `json:"max_rel_dev_line"`
	Substance     string    `json:"substance"`
	Curve         string    `json:"curve"`
	Branch        string    `json:"branch,omitempty"`
	Validity      fitRange  `json:"validity"`
	Fitted        []string  `json:"fitted_parameters"`
	Correlation   [][]any   `json:"correlation_matrix,omitempty"`
	Residuals     []float64 `json:"residuals_rel"`
	Condition     float64   `json:"condition_number"`
	Warnings      []string  `json:"warnings"`
	Iterations    int       `json:"iterations"`
	DataFile      string    `json:"data_file"`
	DataSHA256    string    `json:"data_sha256"`
	Out           string    `json:"out,omitempty"`
	Plot          string    `json:"plot,omitempty"`
}

type fitRange struct {
	TminK float64 `json:"t_min_k"`
	TmaxK float64 `json:"t_max_k"`
}

func (a *app) runFit(f *fitFlags) error {
	switch {
	case f.substance == "":
		return errors.New("fit: --substance is required")
	case f.curve == "":
		return errors.New("fit: --curve is required (saturation, melting, sublimation or transition)")
	case f.family == "":
		return fmt.Errorf("fit: --family is required (one of %s)", strings.Join(thermo.FitFamilies(), ", "))
	case f.data == "":
		return errors.New("fit: --data is required (CSV: temperature_k,pressure_pa[,weight])")
	}
	kind, err := thermo.ParseCurveKind(f.curve)
	if err != nil {
		return fmt.Errorf("fit: --curve: %w", err)
	}
	fixed, err := parseFixed(f.fixed)
	if err != nil {
		return fmt.Errorf("fit: %w", err)
	}
	opt := thermo.FitOptions{Fixed: fixed, FitExponents: f.fitExponents}
	if f.tmin != "" {
		if opt.Tmin, err = units.ParseTemperature(f.tmin); err != nil {
			return fmt.Errorf("fit: --tmin: %w", err)
		}
	}
	if f.tmax != "" {
		if opt.Tmax, err = units.ParseTemperature(f.tmax); err != nil {
			return fmt.Errorf("fit: --tmax: %w", err)
		}
	}
	if f.out != "" && !strings.HasSuffix(strings.ToLower(f.out), ".toml") {
		return fmt.Errorf("fit: --out %q must be a .toml catalog file", f.out)
	}
	if f.molarMass < 0 || math.IsNaN(f.molarMass) || math.IsInf(f.molarMass, 0) {
		return fmt.Errorf("fit: --molar-mass %v must be a positive number in kg/mol", f.molarMass)
	}
	pts, raw, err := readDataCSV(f.data)
	if err != nil {
		return fmt.Errorf("fit: %w", err)
	}
	data := make([]thermo.FitPoint, len(pts))
	for i, q := range pts {
		data[i] = thermo.FitPoint{Temperature: q.t, Pressure: q.p, Weight: q.w}
	}
	res, err := thermo.Fit(f.family, data, opt)
	if err != nil {
		var de *thermo.FitDataError
		if errors.As(err, &de) && de.Row > 0 && de.Row <= len(pts) {
			return fmt.Errorf("fit: data %s line %d: %s", filepath.Base(f.data), pts[de.Row-1].line, de.Reason)
		}
		return fmt.Errorf("fit: %w", err)
	}
	sum := sha256.Sum256(raw)
	rep := fitReport{
		Family: res.Family, Parameters: jsonParams(res.Params), ParameterStdErr: jsonParams(res.StdErr),
		NPoints: res.N, RMSRelDev: res.RMSRelDev, MaxRelDev: res.MaxRelDev,
		Substance: f.substance, Curve: kind.String(), Branch: f.branch,
		Validity: fitRange{res.Tmin, res.Tmax}, Fitted: res.Names, Residuals: res.Residuals,
		Condition: res.Condition, Warnings: res.Warnings, Iterations: res.Iterations,
		DataFile: filepath.Base(f.data), DataSHA256: hex.EncodeToString(sum[:]),
	}
	if rep.Warnings == nil {
		rep.Warnings = []string{}
	}
	if res.MaxRelDevRow > 0 && res.MaxRelDevRow <= len(pts) {
		rep.MaxRelDevLine = pts[res.MaxRelDevRow-1].line
	}
	for _, row := range res.Correlation {
		r := make([]any, len(row))
		for j, x := range row {
			r[j] = jsonNumber(x)
		}
		rep.Correlation = append(rep.Correlation, r)
	}
	if f.out != "" {
		warn, err := a.writeFitCatalog(f, kind, res, rep.DataFile, rep.DataSHA256)
		if err != nil {
			return fmt.Errorf("fit: --out: %w", err)
		}
		rep.Warnings = append(rep.Warnings, warn...)
		rep.Out = f.out
	}
	if f.plotOut != "" {
		rs := make([]plot.Residual, len(res.Residuals))
		for i, r := range res.Residuals {
			// Fit residuals are P_fit/P − 1; the plot shows (P − P_fit)/P.
			rs[i] = plot.Residual{T: pts[i].t, Rel: -r}
		}
		title := fmt.Sprintf("%s %s: %s fit to %s", f.substance, curveLabel(kind, f.branch), res.Family, rep.DataFile)
		p, err := plot.Residuals(rs, title)
		if err != nil {
			return fmt.Errorf("fit: --plot: %w", err)
		}
		if err := plot.Save(p, f.plotOut); err != nil {
			return fmt.Errorf("fit: --plot: %w", err)
		}
		rep.Plot = f.plotOut
	}
	if a.jsonOut {
		enc := json.NewEncoder(a.stdout)
		return enc.Encode(rep)
	}
	return printFitText(a.stdout, &rep, res)
}

func curveLabel(kind thermo.CurveKind, branch string) string {
	if branch == "" {
		return kind.String()
	}
	return kind.String() + "/" + branch
}

func printFitText(w io.Writer, rep *fitReport, res *thermo.FitResult) error {
	fmt.Fprintf(w, "%s fit of %s %s to %s (%d points, %d iterations)\n",
		rep.Family, rep.Substance, curveLabel(mustKind(rep.Curve), rep.Branch), rep.DataFile, rep.NPoints, rep.Iterations)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "parameter\tvalue\tstd. error\t")
	names := make([]string, 0, len(res.Params))
	for k := range res.Params {
		names = append(names, k)
	}
	sort.Strings(names)
	for _, k := range names {
		v := res.Params[k]
		se := res.StdErr[k]
		for i, x := range v {
			label := k
			if len(v) > 1 {
				label = fmt.Sprintf("%s[%d]", k, i+1)
			}
			e := "fixed"
			if i < len(se) && !math.IsNaN(se[i]) {
				e = strconv.FormatFloat(se[i], 'g', 4, 64)
			}
			fmt.Fprintf(tw, "%s\t%.10g\t%s\t\n", label, x, e)
		}
	}
	tw.Flush()
	fmt.Fprintf(w, "relative deviation: RMS %.3g %%, max %.3g %% (line %d)\n", 100*rep.RMSRelDev, 100*rep.MaxRelDev, rep.MaxRelDevLine)
	fmt.Fprintf(w, "validity range: %g K .. %g K\n", rep.Validity.TminK, rep.Validity.TmaxK)
	for _, m := range rep.Warnings {
		fmt.Fprintln(w, "warning: "+m)
	}
	if rep.Out != "" {
		fmt.Fprintf(w, "wrote %s (use it with --catalog %s)\n", rep.Out, rep.Out)
	}
	if rep.Plot != "" {
		fmt.Fprintf(w, "wrote %s\n", rep.Plot)
	}
	return nil
}

func mustKind(s string) thermo.CurveKind {
	k, _ := thermo.ParseCurveKind(s)
	return k
}

// copySubstance returns a deep copy of s whose curves and branches can be
// changed without touching s (catalogs are shared and immutable).
func copySubstance(s *catalog.Substance) *catalog.Substance {
	c := *s
	c.Triple = append([]catalog.TriplePoint(nil), s.Triple...)
	c.Curves = make([]*catalog.Curve, len(s.Curves))
	for i, cv := range s.Curves {
		cc := *cv
		cc.Branches = make([]*catalog.Branch, len(cv.Branches))
		for j, b := range cv.Branches {
			bb := *b
			if b.Reference != nil {
				r := *b.Reference
				bb.Reference = &r
			}
			cc.Branches[j] = &bb
		}
		c.Curves[i] = &cc
	}
	return &c
}

// writeFitCatalog writes the fitted substance as a catalog that merges
// onto the embedded default.
func (a *app) writeFitCatalog(f *fitFlags, kind thermo.CurveKind, res *thermo.FitResult, dataFile, dataSHA string) (warnings []string, err error) {
	base, err := a.loadCatalog()
	if err != nil {
		return nil, err
	}
	date := time.Now().UTC().Format("2006-01-02")
	prov := catalog.Provenance{
		Kind: "fit", DataFile: dataFile, DataSHA256: dataSHA,
		Note: fmt.Sprintf("%s fitted %s (UTC) by phasebound fit to %d points; RMS relative deviation %.3g %%, max %.3g %%",
			res.Family, date, res.N, 100*res.RMSRelDev, 100*res.MaxRelDev),
	}
	br := &catalog.Branch{
		Name:        f.branch,
		Correlation: catalog.Correlation{Family: res.Family, Params: res.Params},
		Tmin:        res.Tmin, Tmax: res.Tmax,
		Uncertainty: fmt.Sprintf("fit: RMS relative deviation %.3g %%, max %.3g %% over %d points in %g–%g K; not valid outside that range",
			100*res.RMSRelDev, 100*res.MaxRelDev, res.N, res.Tmin, res.Tmax),
		Provenance: prov,
	}
	var sub *catalog.Substance
	if old := base.Lookup(f.substance); old != nil {
		sub = copySubstance(old)
		if f.molarMass > 0 {
			sub.MolarMass = f.molarMass
		}
		if f.name != "" {
			sub.Name = f.name
		}
		cv := sub.Curve(kind)
		if cv == nil {
			sub.Curves = append(sub.Curves, &catalog.Curve{Kind: kind, Branches: []*catalog.Branch{br}})
		} else {
			idx := -1
			for i, b := range cv.Branches {
				if b.Name == f.branch {
					idx = i
				}
			}
			if idx < 0 && f.branch == "" && len(cv.Branches) == 1 {
				idx = 0
			}
			switch {
			case idx >= 0:
				old := cv.Branches[idx]
				// Keep what the fit does not change: the solid form, the
				// phase volumes and the reference state.
				br.Name, br.SolidForm = old.Name, old.SolidForm
				br.VolumeLow, br.VolumeHigh, br.Reference = old.VolumeLow, old.VolumeHigh, old.Reference
				if r := br.Reference; r != nil && (r.Temperature < br.Tmin || r.Temperature > br.Tmax) {
					warnings = append(warnings, fmt.Sprintf(
						"the catalog's reference state of this curve at %g K lies outside the fitted range [%g, %g] K and was left out of --out; widen the range with --tmin/--tmax to keep it",
						r.Temperature, br.Tmin, br.Tmax))
					br.Reference = nil
				}
				cv.Branches[idx] = br
			case f.branch == "":
				names := make([]string, len(cv.Branches))
				for i, b := range cv.Branches {
					names[i] = b.Name
				}
				return nil, fmt.Errorf("substance %q has a %s curve of %d branches (%s): name the one fitted with --branch",
					f.substance, kind, len(cv.Branches), strings.Join(names, ", "))
			default:
				for _, b := range cv.Branches {
					if b.Name == "" {
						return nil, fmt.Errorf("substance %q has a single unnamed %s branch: fit it without --branch, or name the new branch's neighbours first", f.substance, kind)
					}
				}
				br.SolidForm = f.branch
				cv.Branches = append(cv.Branches, br)
			}
		}
	} else {
		if f.molarMass <= 0 {
			return nil, fmt.Errorf("substance %q is not in the catalog: give --molar-mass (kg/mol) to create it", f.substance)
		}
		name := f.name
		if name == "" {
			name = f.substance
		}
		if kind == thermo.Melting || kind == thermo.Sublimation {
			br.SolidForm = f.branch
		}
		sub = &catalog.Substance{
			ID: f.substance, Name: name, MolarMass: f.molarMass, Provenance: prov,
			Curves: []*catalog.Curve{{Kind: kind, Branches: []*catalog.Branch{br}}},
		}
	}
	// include_default = true: the written file merges onto the embedded
	// default catalog when loaded.
	out := &catalog.Catalog{Substances: []*catalog.Substance{sub}, Source: "phasebound fit of " + dataFile, IncludeDefault: true}
	// Third-party backends the copied substance names come along.
	used := map[string]bool{}
	for _, cv := range sub.Curves {
		for _, b := range cv.Branches {
			for _, c := range []*catalog.Correlation{&b.Correlation, b.VolumeLow, b.VolumeHigh} {
				if c != nil && c.Backend != "" {
					used[c.Backend] = true
				}
			}
		}
	}
	for _, b := range base.Backends {
		if used[b.Name] {
			out.Backends = append(out.Backends, b)
		}
	}
	var buf bytes.Buffer
	if err := catalog.Write(&buf, out); err != nil {
		return nil, err
	}
	text := buf.Bytes()
	// The file must load as written, merged onto the default.
	if _, err := catalog.Parse(f.out, text); err != nil {
		return nil, fmt.Errorf("the written catalog does not load: %w", err)
	}
	return warnings, os.WriteFile(f.out, text, 0o644)
}
