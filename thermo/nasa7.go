package thermo

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/units"
)

// NASA7Form is the published NASA 7-coefficient form (McBride, Zehe & Gordon,
// NASA/TP-2002-211556), T in K.
const NASA7Form = "Cp/R = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4; " +
	"H/(RT) = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T; " +
	"S/R = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7 " +
	"(McBride, Zehe & Gordon, NASA/TP-2002-211556)"

// NASA7Method describes how the coefficients are fitted.
const NASA7Method = "equality-constrained linear least squares (null-space method): the residuals of Cp/R, " +
	"[H°(T)−H°(298.15 K)]/(RT) and S/R at every grid temperature of both ranges, weighted equally, are " +
	"minimised subject to equal Cp, H and S of the two ranges at the breakpoint and H°(298.15 K) = 0; " +
	"the constraints are solved through a QR factorization of their transpose, the remaining free " +
	"directions by Householder QR; the polynomials are set up in T/1000 K and converted back"

// NASA7EnthalpyReference states the enthalpy convention of a6.
const NASA7EnthalpyReference = "H°(298.15 K) = 0: the polynomial gives H°(T) − H°(298.15 K); add ΔfH°(298.15 K)/R (in K) to a6 of both ranges for the formation-enthalpy convention"

// NASARanges chooses the temperature ranges of the NASA-7 fit (K). Zero values
// take the defaults of DefaultNASARanges.
type NASARanges struct {
	Low, Break, High float64
	Step             float64
}

// DefaultNASARanges returns the NASA-7 ranges used for fields left at zero:
// 200–1000 K and 1000–6000 K on a 10 K grid (the command line shows them as
// its defaults).
func DefaultNASARanges() NASARanges { return NASARanges{Low: 200, Break: 1000, High: 6000, Step: 10} }

// WithDefaults returns r with the fields left at zero taken from
// DefaultNASARanges.
func (r NASARanges) WithDefaults() NASARanges {
	d := DefaultNASARanges()
	if r.Low == 0 {
		r.Low = d.Low
	}
	if r.Break == 0 {
		r.Break = d.Break
	}
	if r.High == 0 {
		r.High = d.High
	}
	if r.Step == 0 {
		r.Step = d.Step
	}
	return r
}

func (r NASARanges) check() error {
	bad := func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) }
	if bad(r.Low) || bad(r.Break) || bad(r.High) || bad(r.Step) || !(r.Low > 0 && r.Low < r.Break && r.Break < r.High) {
		return fmt.Errorf("thermo: NASA-7 ranges %g–%g–%g K: need 0 < low < breakpoint < high", r.Low, r.Break, r.High)
	}
	if r.High > MaxTemperature {
		return fmt.Errorf("thermo: NASA-7 upper limit %g K is above %g K", r.High, MaxTemperature)
	}
	if !(r.Step > 0) || (r.Break-r.Low)/r.Step < 6 || (r.High-r.Break)/r.Step < 6 {
		return fmt.Errorf("thermo: NASA-7 grid step %g K leaves fewer than 7 points in a range", r.Step)
	}
	return nil
}

// grid returns the fit temperatures of both ranges (the breakpoint in both).
func (r NASARanges) grid() (low, high []float64) {
	for i := 0; ; i++ {
		t := r.Low + float64(i)*r.Step
		if t >= r.Break-1e-9 {
			break
		}
		low = append(low, t)
	}
	low = append(low, r.Break)
	for i := 0; ; i++ {
		t := r.Break + float64(i)*r.Step
		if t >= r.High-1e-9 {
			break
		}
		high = append(high, t)
	}
	high = append(high, r.High)
	return low, high
}

// NASA7 is a fitted pair of NASA 7-coefficient polynomials.
type NASA7 struct {
	Form              string      `json:"form"`
	Method            string      `json:"method"`
	EnthalpyReference string      `json:"enthalpy_reference"`
	Breakpoint        float64     `json:"breakpoint_K"`
	GridStep          float64     `json:"grid_step_K"`
	Ranges            []NASARange `json:"ranges"`
}

// NASARange is one temperature range of a NASA-7 fit.
type NASARange struct {
	TMin         float64    `json:"T_min_K"`
	TMax         float64    `json:"T_max_K"`
	Coefficients [7]float64 `json:"coefficients"`
	MaxDeviation Deviations `json:"max_deviation"`
	// The uncertainty budget of the table the polynomials were fitted to, over
	// the range's grid: the largest σ_total of Cp, the temperature intervals
	// (K) where σ_total(Cp) stays below CpSigmaLimit, and those where the
	// model part of the budget exceeds the statistical part for Cp, S or H.
	MaxCpSigmaTotal    Deviation    `json:"max_Cp_sigma_total"`
	CpSigmaTotalBelow  [][2]float64 `json:"Cp_sigma_total_below_0.1_K"`
	ModelDominatedOver [][2]float64 `json:"model_dominated_K"`
}

// CpSigmaLimit is the σ_total of Cp (J mol⁻¹ K⁻¹) below which nasa7.json
// lists the temperatures of each range.
const CpSigmaLimit = 0.1

// addBudget adds the budget of the grid rows to each range.
func (n *NASA7) addBudget(T []float64, rows []Row) {
	for k := range n.Ranges {
		r := &n.Ranges[k]
		r.MaxCpSigmaTotal = Deviation{Unit: "J mol-1 K-1"}
		var below, dominated intervals
		for i, t := range T {
			if t < r.TMin-1e-9 || t > r.TMax+1e-9 {
				continue
			}
			row := rows[i]
			if st := row.SigmaTotal.Cp; st > r.MaxCpSigmaTotal.Value || r.MaxCpSigmaTotal.T == 0 {
				r.MaxCpSigmaTotal.Value, r.MaxCpSigmaTotal.T = st, t
			}
			below.add(t, row.SigmaTotal.Cp < CpSigmaLimit)
			m, s := row.SigmaModel, row.Sigma
			dominated.add(t, m.Cp > s.Cp || m.S > s.S || m.HmH298 > s.HmH298)
		}
		r.CpSigmaTotalBelow, r.ModelDominatedOver = below.list(), dominated.list()
	}
}

// budgetWarnings warns for each range fitted over temperatures where the
// model part of the budget dominates.
func (n *NASA7) budgetWarnings() []string {
	var out []string
	for _, r := range n.Ranges {
		if len(r.ModelDominatedOver) == 0 {
			continue
		}
		var parts []string
		for _, iv := range r.ModelDominatedOver {
			parts = append(parts, fmt.Sprintf("%g–%g K", iv[0], iv[1]))
		}
		out = append(out, fmt.Sprintf("NASA-7 range %g–%g K was fitted over temperatures where the model part of the uncertainty exceeds the statistical part (%s): there the polynomials carry the extrapolation of the model, not the data (largest σ_total of Cp %.3g J mol-1 K-1 at %g K)",
			r.TMin, r.TMax, strings.Join(parts, ", "), r.MaxCpSigmaTotal.Value, r.MaxCpSigmaTotal.T))
	}
	return out
}

// intervals collects the runs of consecutive grid temperatures where a
// condition holds.
type intervals struct {
	runs [][2]float64
	open bool
}

func (iv *intervals) add(t float64, ok bool) {
	switch {
	case ok && iv.open:
		iv.runs[len(iv.runs)-1][1] = t
	case ok:
		iv.runs = append(iv.runs, [2]float64{t, t})
		iv.open = true
	default:
		iv.open = false
	}
}

func (iv *intervals) list() [][2]float64 {
	if iv.runs == nil {
		return [][2]float64{}
	}
	return iv.runs
}

// Deviations are the largest absolute deviations of the polynomials from the
// fitted functions over the grid of a range.
type Deviations struct {
	Cp Deviation `json:"Cp"`
	H  Deviation `json:"H"`
	S  Deviation `json:"S"`
}

// Deviation is one largest deviation and where it occurs.
type Deviation struct {
	Value float64 `json:"value"`
	T     float64 `json:"T_K"`
	Unit  string  `json:"unit"`
}

// Cp returns Cp/R of the range's polynomial at T.
func (r NASARange) Cp(T float64) float64 {
	a := r.Coefficients
	return a[0] + T*(a[1]+T*(a[2]+T*(a[3]+T*a[4])))
}

// H returns H/(RT) of the range's polynomial at T.
func (r NASARange) H(T float64) float64 {
	a := r.Coefficients
	return a[0] + T*(a[1]/2+T*(a[2]/3+T*(a[3]/4+T*a[4]/5))) + a[5]/T
}

// S returns S/R of the range's polynomial at T.
func (r NASARange) S(T float64) float64 {
	a := r.Coefficients
	return a[0]*math.Log(T) + T*(a[1]+T*(a[2]/2+T*(a[3]/3+T*a[4]/4))) + a[6]
}

// nasaRows returns the design rows of Cp/R, H/(RT), S/R at τ = T/1000 in the
// scaled coefficients a'.
func nasaRows(tau float64) (cp, h, s [7]float64) {
	t2, t3, t4 := tau*tau, tau*tau*tau, tau*tau*tau*tau
	cp = [7]float64{1, tau, t2, t3, t4, 0, 0}
	h = [7]float64{1, tau / 2, t2 / 3, t3 / 4, t4 / 5, 1 / tau, 0}
	s = [7]float64{math.Log(tau), tau, t2 / 2, t3 / 3, t4 / 4, 0, 1}
	return
}

const nasaScale = 1000.0

// FitNASA7 fits the NASA 7-coefficient polynomials to the functions f at the
// temperatures T (which must cover both ranges of r; see NASA7Method). f gives
// Cp° and S° in J mol⁻¹ K⁻¹ and H°(T) − H°(298.15 K) in kJ mol⁻¹.
func FitNASA7(T []float64, f []Functions, r NASARanges) (*NASA7, error) {
	r = r.WithDefaults()
	if err := r.check(); err != nil {
		return nil, err
	}
	if len(T) != len(f) || len(T) == 0 {
		return nil, errors.New("thermo: NASA-7 fit: no data")
	}
	a, b := nasaDesign(T, f, r)
	c, d := nasaConstraints(r)
	y, err := solveEqualityConstrained(a, b, c, d)
	if err != nil {
		return nil, fmt.Errorf("thermo: NASA-7 fit: %w", err)
	}
	out := &NASA7{Form: NASA7Form, Method: NASA7Method, EnthalpyReference: NASA7EnthalpyReference, Breakpoint: r.Break, GridStep: r.Step}
	limits := [2][2]float64{{r.Low, r.Break}, {r.Break, r.High}}
	for rng := 0; rng < 2; rng++ {
		nr := NASARange{TMin: limits[rng][0], TMax: limits[rng][1], Coefficients: unscaleNASA(y.RawVector().Data[7*rng : 7*rng+7])}
		nr.MaxDeviation = nr.deviations(T, f)
		out.Ranges = append(out.Ranges, nr)
	}
	for _, rg := range out.Ranges {
		for _, v := range rg.Coefficients {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, cannot("NASA-7 fit gave a non-finite coefficient")
			}
		}
	}
	return out, nil
}

// nasaDesign returns the design matrix A and the data b of the NASA-7 fit in
// the scaled coefficients y = (a′ of the low range, a′ of the high range):
// three rows per grid temperature of each range (the breakpoint in both),
// Cp/R, [H°(T) − H°(298.15 K)]/(RT) and S/R at τ = T/1000 K, weighted equally.
func nasaDesign(T []float64, f []Functions, r NASARanges) (*mat.Dense, *mat.VecDense) {
	R := units.GasConstant
	type obs struct {
		rng      int
		tau      float64
		cp, h, s float64
	}
	var data []obs
	for i, t := range T {
		o := obs{tau: t / nasaScale, cp: f[i].Cp / R, h: f[i].HmH298 * 1000 / (R * t), s: f[i].S / R}
		if t >= r.Low-1e-9 && t <= r.Break+1e-9 {
			o.rng = 0
			data = append(data, o)
		}
		if t >= r.Break-1e-9 && t <= r.High+1e-9 {
			o.rng = 1
			data = append(data, o)
		}
	}
	a := mat.NewDense(3*len(data), 14, nil)
	b := mat.NewVecDense(3*len(data), nil)
	for i, o := range data {
		cp, h, s := nasaRows(o.tau)
		off := 7 * o.rng
		for k := 0; k < 7; k++ {
			a.Set(3*i, off+k, cp[k])
			a.Set(3*i+1, off+k, h[k])
			a.Set(3*i+2, off+k, s[k])
		}
		b.SetVec(3*i, o.cp)
		b.SetVec(3*i+1, o.h)
		b.SetVec(3*i+2, o.s)
	}
	return a, b
}

// nasaConstraints returns the constraints C y = d of the NASA-7 fit, one row
// of C per constraint: equal Cp/R, H/(RT) and S/R of the two ranges at the
// breakpoint, and H°(298.15 K) = 0 in the range that holds 298.15 K (when
// one does).
func nasaConstraints(r NASARanges) (c [][14]float64, d []float64) {
	cpb, hb, sb := nasaRows(r.Break / nasaScale)
	for _, row := range [][7]float64{cpb, hb, sb} {
		var ci [14]float64
		for k := 0; k < 7; k++ {
			ci[k] = row[k]
			ci[7+k] = -row[k]
		}
		c = append(c, ci)
		d = append(d, 0)
	}
	if ReferenceTemperature >= r.Low && ReferenceTemperature <= r.High {
		rng := 0
		if ReferenceTemperature > r.Break {
			rng = 1
		}
		_, h298, _ := nasaRows(ReferenceTemperature / nasaScale)
		var ci [14]float64
		for k := 0; k < 7; k++ {
			ci[7*rng+k] = h298[k]
		}
		c = append(c, ci)
		d = append(d, 0)
	}
	return c, d
}

// solveEqualityConstrained minimises ‖A y − b‖₂ subject to C y = d by the
// null-space method: with the QR factorization Cᵀ = [Q₁ Q₂] [R; 0], the
// particular solution y_p = Q₁ w, Rᵀ w = d (forward substitution), satisfies
// the constraints, and y = y_p + Q₂ z with z the least-squares solution of
// A Q₂ z = b − A y_p (Householder QR). Constraints whose R has a pivot below
// 1e-12 are dependent and an error.
func solveEqualityConstrained(a *mat.Dense, b *mat.VecDense, c [][14]float64, d []float64) (*mat.VecDense, error) {
	const n = 14
	nc := len(c)
	ct := mat.NewDense(n, nc, nil)
	for i, ci := range c {
		for k := 0; k < n; k++ {
			ct.Set(k, i, ci[k])
		}
	}
	var qr mat.QR
	qr.Factorize(ct)
	var q, rr mat.Dense
	qr.QTo(&q)
	qr.RTo(&rr)
	// Rᵀ w = d (forward substitution), y_p = Q₁ w.
	w := make([]float64, nc)
	for i := 0; i < nc; i++ {
		s := d[i]
		for j := 0; j < i; j++ {
			s -= rr.At(j, i) * w[j]
		}
		piv := rr.At(i, i)
		if math.Abs(piv) < 1e-12 {
			return nil, errors.New("dependent constraints")
		}
		w[i] = s / piv
	}
	yp := mat.NewVecDense(n, nil)
	for k := 0; k < n; k++ {
		s := 0.0
		for i := 0; i < nc; i++ {
			s += q.At(k, i) * w[i]
		}
		yp.SetVec(k, s)
	}
	q2 := q.Slice(0, n, nc, n)
	var aq2 mat.Dense
	aq2.Mul(a, q2)
	var rhs mat.VecDense
	rhs.MulVec(a, yp)
	rhs.SubVec(b, &rhs)
	var z mat.VecDense
	if err := z.SolveVec(&aq2, &rhs); err != nil {
		return nil, err
	}
	var y mat.VecDense
	y.MulVec(q2, &z)
	y.AddVec(&y, yp)
	return &y, nil
}

// unscaleNASA turns the coefficients a′ of one range in τ = T/1000 K into the
// published coefficients in T: a_k = a′_k/1000^(k−1) for k = 1…5,
// a6 = 1000·a′6, a7 = a′7 − a′1 ln 1000.
func unscaleNASA(scaled []float64) [7]float64 {
	var c [7]float64
	for k := 0; k < 5; k++ {
		c[k] = scaled[k] / math.Pow(nasaScale, float64(k))
	}
	c[5] = scaled[5] * nasaScale
	c[6] = scaled[6] - scaled[0]*math.Log(nasaScale)
	return c
}

// deviations returns the largest absolute deviations of the range's
// polynomials from the functions f over the temperatures T inside the range.
func (r NASARange) deviations(T []float64, f []Functions) Deviations {
	R := units.GasConstant
	dev := Deviations{Cp: Deviation{Unit: "J mol-1 K-1"}, H: Deviation{Unit: "kJ mol-1"}, S: Deviation{Unit: "J mol-1 K-1"}}
	for i, t := range T {
		if t < r.TMin-1e-9 || t > r.TMax+1e-9 {
			continue
		}
		upd := func(dv *Deviation, v float64) {
			if v > dv.Value || dv.T == 0 {
				dv.Value, dv.T = v, t
			}
		}
		upd(&dev.Cp, math.Abs(r.Cp(t)*R-f[i].Cp))
		upd(&dev.H, math.Abs(r.H(t)*R*t/1000-f[i].HmH298))
		upd(&dev.S, math.Abs(r.S(t)*R-f[i].S))
	}
	return dev
}
