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

// Prediction is a calculated line position with its 1σ propagated from the
// covariance of the constants: σ² = gᵀCg, g = ∂ν/∂p over the fitted parameters.
type Prediction struct {
	Species  string
	VUp, JUp int
	VLo, JLo int
	Branch   string
	Position float64 // cm⁻¹
	Sigma    float64 // cm⁻¹
}

// Predict calculates the lines of the given bands of one species up to lower
// J = jmax for the branches given (default: P and R for vibrational bands, R for
// pure rotation).
func Predict(c *constants.Set, sp string, bands []linelist.Band, jmax int, branches []string) ([]Prediction, error) {
	s := model.SpeciesIndex(c.Model, sp)
	if s < 0 {
		return nil, fmt.Errorf("fit: species %s is not in the constants record (it has %s)", sp, strings.Join(c.Model.Species(), ", "))
	}
	for _, b := range branches {
		if _, ok := linelist.BranchDeltaJ(b); !ok {
			return nil, fmt.Errorf("fit: branch %q: use O, P, Q, R or S", b)
		}
	}
	n := len(c.Free)
	gu := make([]float64, n)
	gl := make([]float64, n)
	g := mat.NewVecDense(max(n, 1), nil)
	var out []Prediction
	for _, b := range bands {
		if !c.Model.HasLevel(s, b.VUp) || !c.Model.HasLevel(s, b.VLo) {
			return nil, fmt.Errorf("fit: band %s of %s: the constants record has no parameters for one of its levels", b, sp)
		}
		for _, v := range []int{b.VUp, b.VLo} {
			if e0, e1 := c.Energy(s, v, 0, nil), c.Energy(s, v, 1, nil); !(e1 > e0) {
				return nil, &CannotFitError{Msg: fmt.Sprintf("fit: band %s of %s: the model's rotational constant B_v is not positive at v=%d (E(v, J=1) − E(v, J=0) = %.6g cm-1; the constants are extrapolated beyond their range): its lines cannot be predicted", b, sp, v, e1-e0)}
			}
		}
		br := branches
		if len(br) == 0 {
			br = []string{"P", "R"}
			if b.VUp == b.VLo {
				br = []string{"R"}
			}
		}
		for _, name := range br {
			dj, _ := linelist.BranchDeltaJ(name)
			if b.VUp == b.VLo && dj <= 0 {
				continue // pure rotation: emission/absorption J → J+1 only
			}
			for jl := 0; jl <= jmax; jl++ {
				ju := jl + dj
				if ju < 0 || (dj == 0 && jl == 0 && b.VUp == b.VLo) {
					continue
				}
				eu := c.Energy(s, b.VUp, ju, gu)
				el := c.Energy(s, b.VLo, jl, gl)
				for k := 0; k < n; k++ {
					g.SetVec(k, gu[k]-gl[k])
				}
				v := 0.0
				if n > 0 {
					v = mat.Inner(g, c.Cov, g)
				}
				out = append(out, Prediction{Species: sp, VUp: b.VUp, JUp: ju, VLo: b.VLo, JLo: jl, Branch: name, Position: eu - el, Sigma: math.Sqrt(math.Max(v, 0))})
			}
		}
	}
	return out, nil
}

// WritePredictions writes predictions as CSV in the line-list column names
// (species, v_up, J_up, v_lo, J_lo, branch, position, unc, unit), unc being
// the 1σ of the calculated position.
func WritePredictions(w io.Writer, ps []Prediction) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"species", "v_up", "J_up", "v_lo", "J_lo", "branch", "position", "unc", "unit"})
	for _, p := range ps {
		cw.Write([]string{p.Species, strconv.Itoa(p.VUp), strconv.Itoa(p.JUp), strconv.Itoa(p.VLo), strconv.Itoa(p.JLo), p.Branch,
			strconv.FormatFloat(p.Position, 'f', 6, 64), strconv.FormatFloat(p.Sigma, 'g', 3, 64), "cm-1"})
	}
	cw.Flush()
	return cw.Error()
}
