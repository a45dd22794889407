package fit

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

// Level is a rovibrational level of one isotopologue: v and J of a ¹Σ state.
// It is the identity a predicted line carries of each of its levels.
type Level struct {
	V, J int
}

// Transition is a line Up ← Lo of one isotopologue, with its branch letter
// (O, P, Q, R, S), or for open-shell and electronic lines the branch in the
// notation of linelist.Branch and the levels' labels in Open (Up.J and Lo.J
// are then J − ½ when Open.HalfJ, as in a linelist.Line).
type Transition struct {
	Species string
	Up, Lo  Level
	Branch  string
	Open    *linelist.OpenShell
}

// Line returns the transition as a line-list line (no position).
func (t Transition) Line() linelist.Line {
	return linelist.Line{Species: t.Species, VUp: t.Up.V, JUp: t.Up.J, VLo: t.Lo.V, JLo: t.Lo.J, Branch: t.Branch, Open: t.Open}
}

// Label writes the transition in the notation of the trade: "1-0 P(12)",
// "A:0-0 pQ12(3.5) e-f" (linelist.LineLabel).
func (t Transition) Label() string {
	if t.Open == nil {
		return linelist.TransitionLabel(t.Up.V, t.Up.J, t.Lo.V, t.Lo.J)
	}
	l := t.Line()
	return linelist.LineLabel(&l)
}

// Prediction is a calculated line: its transition, position ν and 1σ in cm⁻¹
// propagated from the covariance of the constants (σ² = gᵀCg, g = ∂ν/∂p over
// the fitted parameters), its relative intensity (NaN when not computed) and
// whether it is an extrapolation (a level outside those the fitted lines
// reach, see MarkExtrapolated).
type Prediction struct {
	Transition
	Position     float64 // cm⁻¹
	Sigma        float64 // cm⁻¹
	Intensity    float64 // relative; NaN: not computed
	Extrapolated bool
}

// BandTransitions lists the lines of band b of species sp in the given
// branches, lower-state J from 0 to jmax: J′ = J″ + ΔJ of the branch, levels
// with J < 0 left out. Pure-rotation bands (v′ = v″) keep ΔJ > 0 only: a
// ΔJ < 0 line is the same line as its ΔJ > 0 partner and ΔJ = 0 has no
// frequency. Unknown branch letters are an error.
func BandTransitions(sp string, b linelist.Band, branches []string, jmax int) ([]Transition, error) {
	var out []Transition
	for _, name := range branches {
		dj, ok := linelist.BranchDeltaJ(name)
		if !ok {
			return nil, fmt.Errorf("fit: branch %q: use O, P, Q, R or S", name)
		}
		if b.VUp == b.VLo && dj <= 0 {
			continue
		}
		for jl := 0; jl <= jmax; jl++ {
			ju := jl + dj
			if ju < 0 {
				continue
			}
			out = append(out, Transition{Species: sp, Up: Level{b.VUp, ju}, Lo: Level{b.VLo, jl}, Branch: linelist.BranchLetter(dj)})
		}
	}
	return out, nil
}

// PredictTransitions calculates the position and its 1σ of every transition
// from the constants c. A transition whose species is not in the record, or
// one of whose vibrational levels the record has no parameters for, is an
// error; so is a level whose rotational constant B_v has turned negative in
// the model (E(v, 1) ≤ E(v, 0), constants extrapolated beyond their range:
// *CannotFitError). Intensities are left NaN.
func PredictTransitions(c *constants.Set, ts []Transition) ([]Prediction, error) {
	if lm, open := openModel(c); open || hasOpen(ts) {
		if lm == nil {
			return nil, fmt.Errorf("fit: the %s model cannot predict open-shell levels", c.Model.Kind())
		}
		return predictOpen(c, lm, ts)
	}
	n := len(c.Free)
	gu := make([]float64, n)
	gl := make([]float64, n)
	g := mat.NewVecDense(max(n, 1), nil)
	type speciesLevel struct{ s, v int }
	checked := map[speciesLevel]bool{} // levels whose B_v was checked
	out := make([]Prediction, 0, len(ts))
	for _, t := range ts {
		s := model.SpeciesIndex(c.Model, t.Species)
		if s < 0 {
			return nil, fmt.Errorf("fit: species %s is not in the constants record (it has %s)", t.Species, strings.Join(c.Model.Species(), ", "))
		}
		for _, v := range []int{t.Up.V, t.Lo.V} {
			if checked[speciesLevel{s, v}] {
				continue
			}
			if err := checkLevel(c, s, v, t); err != nil {
				return nil, err
			}
			checked[speciesLevel{s, v}] = true
		}
		eu := c.Energy(s, t.Up.V, t.Up.J, gu)
		el := c.Energy(s, t.Lo.V, t.Lo.J, gl)
		for k := 0; k < n; k++ {
			g.SetVec(k, gu[k]-gl[k])
		}
		v := 0.0
		if n > 0 {
			v = mat.Inner(g, c.Cov, g)
		}
		out = append(out, Prediction{Transition: t, Position: eu - el, Sigma: math.Sqrt(math.Max(v, 0)), Intensity: math.NaN()})
	}
	return out, nil
}

// checkLevel refuses vibrational level v of species s when the record has
// no parameters for it or its rotational constant is not positive.
func checkLevel(c *constants.Set, s, v int, t Transition) error {
	band := linelist.BandLabel(t.Up.V, t.Lo.V)
	if !c.Model.HasLevel(s, v) {
		return fmt.Errorf("fit: band %s of %s: the constants record has no parameters for v=%d", band, t.Species, v)
	}
	if e0, e1 := c.Energy(s, v, 0, nil), c.Energy(s, v, 1, nil); !(e1 > e0) {
		return &CannotFitError{Msg: fmt.Sprintf("fit: band %s of %s: the model's rotational constant B_v is not positive at v=%d (E(v, J=1) − E(v, J=0) = %.6g cm-1; the constants are extrapolated beyond their range): its lines cannot be predicted", band, t.Species, v, e1-e0)}
	}
	return nil
}

// MarkExtrapolated marks the predictions one of whose levels lies outside
// those the fitted lines reached: a vibrational level without observed lines,
// or J above the highest observed in its level (constants.LevelRange).
func MarkExtrapolated(ps []Prediction, observed []constants.LevelRange) {
	type key struct {
		sp, st string
		v      int
	}
	jmax := map[key]int{}
	for _, o := range observed {
		jmax[key{o.Species, o.State, o.V}] = o.JMax
	}
	outside := func(sp, st string, l Level) bool {
		j, ok := jmax[key{sp, st, l.V}]
		return !ok || l.J > j
	}
	for i := range ps {
		p := &ps[i]
		var su, sl string
		if p.Open != nil {
			su, sl = p.Open.Up.State, p.Open.Lo.State
		}
		p.Extrapolated = outside(p.Species, su, p.Up) || outside(p.Species, sl, p.Lo)
	}
}

// PredictionColumns are the columns of a predicted-line file, in order: the
// line-list columns (so the file can be edited into a line list), then
// extrapolated (yes/no) and, with intensities, intensity. Predictions of
// open-shell or electronic lines add the open-shell columns
// (linelist.OpenColumns) after J_lo.
var PredictionColumns = []string{"species", "v_up", "J_up", "v_lo", "J_lo", "branch", "position", "unc", "unit", "extrapolated"}

// WritePredictions writes predictions as CSV (PredictionColumns): position
// and unc in unit u, with as many decimals as the 1σ needs to show at least
// two significant digits (unc itself to that place; the full precision when
// σ = 0, constants without covariance), and with withIntensity an intensity
// column relative to the strongest line written (3 significant digits).
func WritePredictions(w io.Writer, ps []Prediction, u linelist.Unit, withIntensity bool) error {
	cw := csv.NewWriter(w)
	head := PredictionColumns
	open := false
	for _, p := range ps {
		open = open || p.Open != nil
	}
	if open {
		head = append(append(append([]string(nil), head[:5]...), linelist.OpenColumns()...), head[5:]...)
	}
	top := 0.0
	if withIntensity {
		head = append(append([]string(nil), head...), "intensity")
		for _, p := range ps {
			if p.Intensity > top {
				top = p.Intensity
			}
		}
	}
	if err := cw.Write(head); err != nil {
		return err
	}
	for _, p := range ps {
		pos, unc := u.FromWavenumber(p.Position), u.FromWavenumber(p.Sigma)
		d := SigmaDecimals(unc)
		l := p.Line()
		rec := []string{p.Species, strconv.Itoa(p.Up.V), linelist.FormatJ(l.J2Up()), strconv.Itoa(p.Lo.V), linelist.FormatJ(l.J2Lo())}
		if open {
			rec = append(rec, linelist.OpenCells(p.Open)...)
		}
		num := len(rec) + 1 // index of position
		rec = append(rec, p.Branch, strconv.FormatFloat(pos, 'f', d, 64), strconv.FormatFloat(unc, 'f', d, 64), u.String(), yesNo(p.Extrapolated))
		if d < 0 {
			rec[num], rec[num+1] = strconv.FormatFloat(pos, 'g', -1, 64), "0"
		}
		if withIntensity {
			in := 0.0
			if top > 0 && p.Intensity > 0 {
				in = p.Intensity / top
			}
			rec = append(rec, strconv.FormatFloat(in, 'g', 3, 64))
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// SigmaDecimals returns the number of decimals that writes σ with at least
// two significant digits: max(0, 1 − ⌊log₁₀ σ⌋); −1 for σ that is zero or
// not finite (no σ to set the digits).
func SigmaDecimals(sigma float64) int {
	if !(sigma > 0) || math.IsInf(sigma, 0) {
		return -1
	}
	return max(0, 1-int(math.Floor(math.Log10(sigma))))
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}
