package assign

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// lockAll locks the bands, strongest first. The first band of a molecule is
// locked from the starting constants; every later one from a joint Dunham
// fit of the lines already assigned in that molecule (see refreshPrediction),
// after the predict–match–fit loop has taken the locked bands as far as the
// data go. Bands that fail are tried once more at the end.
func (r *run) lockAll() error {
	order := make([]*band, len(r.bands))
	copy(order, r.bands)
	sort.SliceStable(order, func(i, j int) bool { return order[i].pmax > order[j].pmax })
	globalScale := math.NaN()
	anyLocked := false
	for pass := 0; pass < 2; pass++ {
		progress := false
		for _, b := range order {
			if b.locked || (pass > 0 && !anyLocked) {
				continue
			}
			if err := r.refreshPrediction(b); err != nil {
				return err
			}
			L, ms := r.tryLock(b, globalScale)
			b.tries++
			if !L.OK {
				if b.tries == 1 || L.Score >= b.lock.Score || b.lockPos != nil {
					b.lock = L
				}
				continue
			}
			saved, savedScale := r.save(), globalScale
			b.lock = L
			b.locked = true
			r.takeLockLines(b, ms, &globalScale)
			r.updateIntensityScales()
			if err := r.loop(); err != nil {
				// The lines this lock brought cannot be fitted with the
				// others: the lock was wrong. Undo it and go on without
				// the band.
				r.restore(saved)
				globalScale = savedScale
				b.locked, b.lock.OK = false, false
				b.lock.Reason = "its lock was undone: the lines it brought could not be fitted with the others (" + err.Error() + ")"
				continue
			}
			anyLocked, progress = true, true
		}
		if !progress {
			break
		}
	}
	if !anyLocked {
		var brs []BandResult
		for _, b := range r.bands {
			brs = append(brs, BandResult{Species: b.sp.sp.Label, VUp: b.vu, VLo: b.vl, Lock: b.lock})
		}
		return &LockError{Bands: brs, Hint: r.unitHint()}
	}
	for _, b := range r.bands {
		if !b.locked {
			r.warnings = append(r.warnings, fmt.Sprintf("band %s not locked: %s", b.label(), b.lock.Reason))
		}
	}
	return nil
}

// tryLock runs the lock search of band b against the peaks no band has
// taken: narrowed to the σ of a fitted prediction first, when there is one,
// and if that fails, with the full search.
func (r *run) tryLock(b *band, globalScale float64) (Lock, []lockMatch) {
	taken := make([]bool, len(r.pos))
	for _, k := range r.assigned {
		taken[k] = true
	}
	L, ms := r.lockBand(b, taken, globalScale, true)
	if !L.OK && b.lockPos != nil {
		if L2, ms2 := r.lockBand(b, taken, globalScale, false); L2.OK || L2.Score > L.Score {
			L, ms = L2, ms2
		}
	}
	return L, ms
}

// takeLockLines assigns the lock lines ms of band b and takes the median
// ln(I_obs/I_pred) of a fundamental or hot band as the intensity scale of its
// species and, when none is set, as the scale of the whole spectrum.
func (r *run) takeLockLines(b *band, ms []lockMatch, globalScale *float64) {
	var ells []float64
	for _, m := range ms {
		t := Transition{Species: b.sp.sp.Label, VUp: b.vu, JUp: m.line.jlo + m.line.br.dJ, VLo: b.vl, JLo: m.line.jlo}
		r.assigned[t] = m.peak
		b.jcore = max(b.jcore, m.line.jlo)
		m.line.br.jhi = max(m.line.br.jhi, m.line.jlo)
		if m.line.group == 0 && !math.IsNaN(r.lnI[m.peak]) {
			ells = append(ells, r.lnI[m.peak]-m.line.lnP)
		}
	}
	if len(ells) > 0 && abs(b.vu-b.vl) <= 1 {
		g := median(ells)
		if math.IsNaN(*globalScale) {
			*globalScale = g
		}
		if _, ok := r.speciesScale[b.sp.sp.Label]; !ok {
			r.speciesScale[b.sp.sp.Label] = g
		}
	}
}

// loop runs fit → predict → match until the assignment is stable, then the
// combination-difference checks, and again while they drop lines.
func (r *run) loop() error {
	for round := 0; round < 6; round++ {
		stable := false
		for it := 0; it < r.s.maxIter(); it++ {
			r.iter++
			rejected, err := r.doFit()
			if err != nil {
				return err
			}
			if len(r.assigned) == 0 {
				return errors.New("assign: every assigned line was rejected by the internal fit")
			}
			mt := r.matchAll()
			changed := !sameAssignment(r.assigned, mt.assigned)
			r.assigned = mt.assigned
			r.last = mt
			r.updateIntensityScales()
			if !changed && !rejected {
				stable = true
				break
			}
		}
		if !stable {
			r.warnings = append(r.warnings, fmt.Sprintf("the assignment did not settle within %d iterations; the last one is reported", r.s.maxIter()))
		}
		// Re-fit the final assignment (it may differ from the last fit).
		if _, err := r.doFit(); err != nil {
			return err
		}
		flagged := r.checkCombinationDifferences()
		if flagged == 0 && stable && r.fitMatchesAssignment() {
			return nil
		}
		if flagged == 0 && !stable {
			return nil
		}
	}
	return nil
}

func (r *run) fitMatchesAssignment() bool {
	if r.fit == nil || len(r.fitProb.Lines) != len(r.assigned) {
		return false
	}
	for _, lr := range r.fit.Lines {
		if !lr.Used {
			return false
		}
	}
	return true
}

func sameAssignment(a, b map[Transition]int) bool {
	if len(a) != len(b) {
		return false
	}
	for t, k := range a {
		if k2, ok := b[t]; !ok || k2 != k {
			return false
		}
	}
	return true
}
