package assign

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"bandwright/fit"
	"bandwright/fit/linelist"
)

// run is the state of one assignment.
type run struct {
	p Problem
	s Settings

	pos     []float64 // sorted peak positions, cm⁻¹
	unc     []float64 // stated or default 1σ, cm⁻¹
	lnI     []float64 // ln intensity, NaN when unknown
	peakOf  []int     // sorted index → index in p.Peaks.Peaks
	uSource []string
	lo, hi  float64
	uMed    float64
	uncEst  bool
	// scaleGuess is a rough ln(I_obs/I_pred) from the strongest peaks and the
	// strongest predicted lines (NaN without intensities).
	scaleGuess   float64
	speciesScale map[string]float64 // ln(I_obs/I_pred) of each species with a locked band

	species []*spState
	bands   []*band

	assigned map[Transition]int // transition → sorted peak index
	bans     map[banKey]string
	dropped  map[int]droppedInfo // sorted peak index → why its assignment was dropped

	fit      *fit.Result
	fitProb  fit.Problem
	fp       *fitPredictor
	sFit     float64 // dimensionless standard deviation of the last fit (≥ 1 for tolerances)
	sigI     float64 // intensity scatter (ln units)
	last     *matching
	cdBand   map[*band]*CDStats
	cdLine   map[Transition][2]int // checked, passed
	iter     int
	warnings []string
}

type banKey struct {
	t    Transition
	peak int
}

type droppedInfo struct {
	t      Transition
	reason string
}

type spState struct {
	sp StartSpecies
	im *IntensityModel
}

// branch holds the predictions of one branch of a band, indexed by J″.
type branch struct {
	dJ         int
	jmin, jmax int
	start      []float64 // start-constant position, cm⁻¹ (index J″)
	inten      []float64 // relative intensity
	elo        []float64 // lower-level energy above the lowest level, cm⁻¹
	group      int       // intensity group: 1 for the Raman Q branch, else 0
	jhi        int       // highest J″ assigned so far (−1: none)
}

type band struct {
	id       int
	sp       *spState
	vu, vl   int
	branches []*branch
	bbar     float64 // mean rotational constant of the two levels, cm⁻¹
	origin   float64 // start-constant origin E(v′,0) − E(v″,0), cm⁻¹
	lnPFirst float64 // ln of the predicted intensity of the line next to the gap
	pmax     float64
	lock     Lock
	locked   bool
	jcore    int // highest J″ of the lock lines
	// intensity scale ln(I_obs/I_pred) = g + h·E″ per group
	g, h [2]float64
	hasG [2]bool
	// lockPos holds positions predicted by a fit of the lines already
	// assigned (nil: lock from the starting constants), lockOrigin the
	// origin from the same fit.
	lockPos       map[*branch][]float64
	lockSig       map[*branch][]float64
	lockOrigin    float64
	lockSigOrigin float64
	tries         int
}

func (b *band) label() string { return fmt.Sprintf("%s %d-%d", b.sp.sp.Label, b.vu, b.vl) }

// newRun checks the problem and the settings and sets up the run: the peaks
// sorted by wavenumber with their uncertainties, and the predicted lines of
// every band of every species.
func newRun(p Problem, s Settings) (*run, error) {
	if err := checkProblem(&p, s); err != nil {
		return nil, err
	}
	r := &run{p: p, s: s, speciesScale: map[string]float64{}, assigned: map[Transition]int{}, bans: map[banKey]string{}, dropped: map[int]droppedInfo{}, sFit: 1, sigI: 0.3}
	r.setPeaks()
	r.setUncertainties()
	if err := r.setBands(); err != nil {
		return nil, err
	}
	r.scaleGuess = r.guessScale()
	return r, nil
}

// DefaultTemperature is the sample temperature (K) of a problem that gives
// none: room temperature, the reference temperature of the common
// line-intensity databases. The command line and the pipeline file take it
// from here.
const DefaultTemperature = 296.0

// checkProblem refuses a problem or settings an assignment cannot start from,
// and fills in the default temperature.
func checkProblem(p *Problem, s Settings) error {
	if p.Peaks == nil || len(p.Peaks.Peaks) == 0 {
		return errors.New("assign: no peaks")
	}
	if p.Start == nil || len(p.Start.Species) == 0 {
		return errors.New("assign: no species to look for")
	}
	if len(p.Bands) == 0 {
		return errors.New("assign: no bands given (e.g. 1-0,2-1)")
	}
	if err := p.Start.CheckBands(p.Bands); err != nil {
		return err
	}
	if p.Temperature == 0 {
		p.Temperature = DefaultTemperature
	}
	if !(p.Temperature > 0) || math.IsInf(p.Temperature, 0) {
		return fmt.Errorf("assign: temperature must be > 0 K, got %g", p.Temperature)
	}
	if s.Tolerance < 0 || math.IsNaN(s.Tolerance) || s.DefaultUnc < 0 || math.IsNaN(s.DefaultUnc) {
		return errors.New("assign: tolerance and default uncertainty must be ≥ 0")
	}
	return nil
}

// setPeaks sorts the peaks by wavenumber and sets their positions (cm⁻¹), ln
// intensities and the spectral range. Intensities that are all the same (a
// column filled with 1 by a program that measured none) carry no information
// and are not used, with a warning: compared with the predicted ones they
// would only count against the right pattern.
func (r *run) setPeaks() {
	pk := r.p.Peaks.Peaks
	idx := make([]int, len(pk))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return pk[idx[a]].Wavenumber() < pk[idx[b]].Wavenumber() })
	r.peakOf = idx
	n := len(pk)
	r.pos, r.lnI = make([]float64, n), make([]float64, n)
	for k, i := range idx {
		r.pos[k] = pk[i].Wavenumber()
		r.lnI[k] = math.NaN()
		if pk[i].Intensity > 0 {
			r.lnI[k] = math.Log(pk[i].Intensity)
		}
	}
	r.lo, r.hi = r.pos[0], r.pos[n-1]
	given, first, same := 0, math.NaN(), true
	for _, x := range r.lnI {
		if math.IsNaN(x) {
			continue
		}
		if given == 0 {
			first = x
		}
		same = same && x == first
		given++
	}
	if given >= 2 && same {
		for k := range r.lnI {
			r.lnI[k] = math.NaN()
		}
		r.warnings = append(r.warnings, fmt.Sprintf("every peak with an intensity has the same one (%d peaks): the intensities carry no information and are not used", given))
	}
}

// placeholderUnc is the 1σ (cm⁻¹) the peaks carry while no uncertainty is
// known at all: with every peak alike it only sets the unit of the internal
// fit's weights, and the final result replaces it by the fit's scatter.
const placeholderUnc = 1e-3

// setUncertainties gives every peak its 1σ in cm⁻¹ and says where it came
// from: the peak list; else Settings.DefaultUnc; else the median of the
// uncertainties the peak list gives; else a placeholder, to be replaced by
// the scatter of the internal fit (uncEst).
func (r *run) setUncertainties() {
	pk := r.p.Peaks.Peaks
	var given []float64
	for _, i := range r.peakOf {
		if pk[i].Unc > 0 {
			given = append(given, pk[i].UncWavenumber())
		}
	}
	def := r.s.DefaultUnc
	src := "default"
	if def == 0 && len(given) > 0 {
		def = median(append([]float64(nil), given...))
		src = "median of the peak list"
	}
	if def == 0 {
		// No uncertainty anywhere: unit weights, estimated from the scatter.
		r.uncEst = true
		def = placeholderUnc
		src = "fit scatter"
	}
	n := len(pk)
	r.unc, r.uSource = make([]float64, n), make([]string, n)
	for k, i := range r.peakOf {
		if pk[i].Unc > 0 {
			r.unc[k] = pk[i].UncWavenumber()
			r.uSource[k] = "peak list"
		} else {
			r.unc[k] = def
			r.uSource[k] = src
		}
	}
	if !r.uncEst {
		r.uMed = median(append([]float64(nil), r.unc...))
	}
}

// setBands sets up the intensity model of every species and predicts every
// band of it from the starting constants.
func (r *run) setBands() error {
	p := r.p
	for _, sp := range p.Start.Species {
		if sp.Iso.Homonuclear() && p.Spectrum != Raman {
			return fmt.Errorf("assign: %s is homonuclear: it has no electric-dipole %s spectrum; use --spectrum raman", sp.Label, map[Spectrum]string{Infrared: "infrared", Rotation: "rotational"}[p.Spectrum])
		}
		im, err := NewIntensityModel(p.Spectrum, p.Temperature, sp)
		if err != nil {
			return err
		}
		r.species = append(r.species, &spState{sp: sp, im: im})
	}
	seen := map[linelist.Band]bool{}
	for _, spst := range r.species {
		for _, bs := range p.Bands {
			if seen[bs] && spst == r.species[0] {
				return fmt.Errorf("assign: band %d-%d is given twice", bs.VUp, bs.VLo)
			}
			seen[bs] = true
			b, err := r.newBand(spst, bs)
			if err != nil {
				return err
			}
			b.id = len(r.bands)
			r.bands = append(r.bands, b)
		}
	}
	return nil
}

// guessScale compares the strongest peaks with the strongest predicted lines
// of all bands: the median ln intensity of the top k of each, k = 10 or a
// tenth of the peaks, whichever is smaller.
func (r *run) guessScale() float64 {
	var obs, pre []float64
	for _, x := range r.lnI {
		if !math.IsNaN(x) {
			obs = append(obs, x)
		}
	}
	if len(obs) < 5 {
		return math.NaN()
	}
	for _, b := range r.bands {
		for _, br := range b.branches {
			for j := br.jmin; j <= br.jmax; j++ {
				if x := br.start[j]; br.inten[j] > 0 && x >= r.lo && x <= r.hi {
					pre = append(pre, math.Log(br.inten[j]))
				}
			}
		}
	}
	if len(pre) == 0 {
		return math.NaN()
	}
	k := min(10, max(1, len(obs)/10), len(pre))
	sort.Sort(sort.Reverse(sort.Float64Slice(obs)))
	sort.Sort(sort.Reverse(sort.Float64Slice(pre)))
	return median(obs[:k]) - median(pre[:k])
}

// newBand predicts the lines of a band from the starting constants.
func (r *run) newBand(sp *spState, bs linelist.Band) (*band, error) {
	dJs, err := r.p.Spectrum.DeltaJ(bs)
	if err != nil {
		return nil, err
	}
	m := sp.sp.Constants.Model
	if !m.HasLevel(sp.sp.Index, bs.VUp) || !m.HasLevel(sp.sp.Index, bs.VLo) {
		return nil, fmt.Errorf("assign: band %d-%d of %s: the starting constants have no parameters for one of its levels", bs.VUp, bs.VLo, sp.sp.Label)
	}
	b := &band{sp: sp, vu: bs.VUp, vl: bs.VLo, lnPFirst: math.Inf(-1)}
	E := func(v, J int) float64 { return sp.sp.Constants.Energy(sp.sp.Index, v, J, nil) }
	b.origin = E(bs.VUp, 0) - E(bs.VLo, 0)
	b.bbar = ((E(bs.VUp, 1) - E(bs.VUp, 0)) + (E(bs.VLo, 1) - E(bs.VLo, 0))) / 4
	if !(b.bbar > 0) {
		return nil, fmt.Errorf("assign: band %d-%d of %s: the starting constants give no positive rotational constant", bs.VUp, bs.VLo, sp.sp.Label)
	}
	const jLimit = 400
	for _, dJ := range dJs {
		br := &branch{dJ: dJ, jhi: -1}
		if r.p.Spectrum == Raman && dJ == 0 {
			br.group = 1
		}
		br.jmin = max(0, -dJ)
		if dJ == 0 {
			br.jmin = 1 // Q(0) has no strength (and is no line in pure rotation)
		}
		pmax := 0.0
		prevU, prevL := math.Inf(-1), math.Inf(-1)
		for J := 0; J <= jLimit; J++ {
			if J < br.jmin {
				br.start = append(br.start, math.NaN())
				br.inten = append(br.inten, 0)
				br.elo = append(br.elo, math.NaN())
				continue
			}
			eu, el := E(bs.VUp, J+dJ), E(bs.VLo, J)
			// The expansion in J(J+1) stops describing the molecule where the
			// rotational energy stops growing.
			if eu <= prevU || el <= prevL {
				break
			}
			prevU, prevL = eu, el
			nu := eu - el
			t := Transition{Species: sp.sp.Label, VUp: bs.VUp, JUp: J + dJ, VLo: bs.VLo, JLo: J}
			p := sp.im.RelativeIntensity(t, nu)
			if !(nu > 0) {
				break
			}
			br.start = append(br.start, nu)
			br.inten = append(br.inten, p)
			br.elo = append(br.elo, sp.im.LowerEnergy(bs.VLo, J))
			pmax = math.Max(pmax, p)
			if J > br.jmin+5 && p < 1e-9*pmax {
				break
			}
		}
		br.jmax = len(br.start) - 1
		if br.jmax < br.jmin {
			continue
		}
		b.pmax = math.Max(b.pmax, pmax)
		b.branches = append(b.branches, br)
		// The line next to the infrared gap: R(0).
		if dJ == 1 && br.jmin == 0 {
			b.lnPFirst = math.Log(br.inten[0])
		}
	}
	if len(b.branches) == 0 {
		return nil, fmt.Errorf("assign: band %d-%d of %s: no line can be predicted", bs.VUp, bs.VLo, sp.sp.Label)
	}
	return b, nil
}

// bandOf returns the band and branch of a transition.
func (r *run) bandOf(t Transition) (*band, *branch) {
	for _, b := range r.bands {
		if b.sp.sp.Label != t.Species || b.vu != t.VUp || b.vl != t.VLo {
			continue
		}
		for _, br := range b.branches {
			if br.dJ == t.DeltaJ() && t.JLo >= br.jmin && t.JLo <= br.jmax {
				return b, br
			}
		}
	}
	return nil, nil
}
