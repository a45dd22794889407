package thermo

import (
	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/species"
)

// block is one constants record in the combined parameter space: its fitted
// parameters are x[offset : offset+len(c.Free)].
type block struct {
	c      *constants.Set
	offset int
	label  string // "" for the ground state
}

// System is the enumerated level sum, ready to be evaluated at any temperature.
// Levels are sorted by energy above the zero; each carries its weight
// g_e·g_ns·(2J+1) and ∂E/∂x over the combined fitted parameters x.
type System struct {
	iso         species.Isotopologue
	states      []State
	blocks      []block
	manifolds   []*manifold
	stateMan    []int     // manifold of each state
	stateTerm   []float64 // term energy added to the manifold energies
	p           int       // number of combined fitted parameters
	x0          []float64 // their values
	cov         *mat.SymDense
	names       []string
	spin        string
	sigmaNumber int
	spinFactor  float64 // nuclear-spin factor of the closed form

	// Levels (sorted by e).
	e    []float64
	w    []float64
	g    []float64 // ∂E/∂x, column-major: g[k·len(e)+i] for parameter k, level i
	ext  []bool
	st   []int16
	lv   []int32 // level index in its manifold
	zero levelRef
	e0   float64 // absolute energy of the zero (state term + model energy)

	// Level sources of the blocks, and the dissociation limit of the sum.
	sources      []*levelSource
	dissociation Dissociation
	// Extra levels between each state's nominal dissociation limit and the
	// highest of the budget's alternatives (energy above the zero, weight,
	// state), sorted by energy; capShift[s] is added to D0 to give the limit
	// of state s above the zero.
	extraE   []float64
	extraW   []float64
	extraSt  []int16
	capShift []float64
	// pm directions of the budget follow the p parameters in g (see budget).
	pm     int
	budget *budget

	// Translation.
	molarMass float64 // g/mol used in the Sackur–Tetrode equation
	pressure  float64 // Pa

	summaries []StateLevels
	warnings  []string
	zp        *ZeroPoint
	tMax      float64
}

type levelRef struct {
	state int
	idx   int // index in the state's manifold
}

// levelGrad writes ∂E/∂x (combined fitted parameters) of level idx of the
// manifold of state st into dst (allocated when nil).
func (sys *System) levelGrad(st, idx int, dst []float64) []float64 {
	if dst == nil {
		dst = make([]float64, sys.p)
	}
	clear(dst)
	m := sys.manifolds[sys.stateMan[st]]
	off := sys.blocks[m.block].offset
	copy(dst[off:off+m.nfree], m.grad[idx*m.nfree:(idx+1)*m.nfree])
	return dst
}
