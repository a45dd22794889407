package report

import (
	"math"
	"sort"
	"strings"
)

// thermoFunctions are the functions of thermo.csv: column and how the report
// names them.
var thermoFunctions = []struct{ key, name string }{
	{"Q", "Q"}, {"Cp", "Cp°"}, {"S", "S°"}, {"H_minus_H0", "H°(T) − H°(0)"},
	{"H_minus_H298", "H°(T) − H°(298.15 K)"}, {"gef", "−[G°(T) − H°(298.15 K)]/T"},
}

// modelDominance returns, for each function whose model σ exceeds its
// statistical σ somewhere in the table, "name from T K" with the lowest such
// temperature; nil when thermo.csv has no model σ.
func modelDominance(th *thermoTable) []string {
	T := th.get("T_K")
	order := make([]int, len(T))
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(a, b int) bool { return T[order[a]] < T[order[b]] })
	var out []string
	for _, fn := range thermoFunctions {
		stat, mod := th.get(fn.key+"_sigma"), th.get(fn.key+"_sigma_model")
		if stat == nil || mod == nil {
			continue
		}
		for _, i := range order {
			if mod[i] > stat[i] {
				out = append(out, sprintf("%s from %s K", fn.name, num(T[i], 6)))
				break
			}
		}
	}
	return out
}

// thermoGlance adds the sentences of At a glance on the thermodynamic
// table: which functions rest more on the model than on the data, and from
// which temperature; the share of Q from levels outside the data; the caution.
func thermoGlance(s *section, th *thermoTable) {
	if th.get("Cp_sigma_model") == nil {
		s.para("thermo.csv carries only the statistical σ of the fit (no model part): it was written before the uncertainty budget existed; recompute it to see what the data leave open.")
		return
	}
	if dom := modelDominance(th); len(dom) > 0 {
		s.para("Thermodynamic table: the model part of the uncertainty (what the lines did not observe: levels beyond the data, the dissociation limit, truncated series, neglected fine structure) exceeds the statistical part of the fit for %s. There the values rest more on the extrapolation than on the data; the tables below give σ_total and round to it.", strings.Join(dom, ", "))
	} else {
		s.para("Thermodynamic table: the statistical σ of the fit exceeds the model part of the uncertainty at every temperature of the table.")
	}
	if sh := th.get("share_outside_data"); sh != nil {
		T := th.get("T_K")
		worst, at := 0.0, 0.0
		for i, x := range sh {
			if x > worst {
				worst, at = x, T[i]
			}
		}
		if worst > 1e-3 {
			s.para("Levels outside the data (v not observed, or J above the highest observed) carry up to %s of the partition function (at %s K).", relPercent(worst), num(at, 6))
		}
	}
	for _, c := range th.comments {
		for _, key := range []string{"temperatures left out:", "fine structure neglected: over this table"} {
			if i := strings.Index(c, key); i >= 0 {
				s.para("Thermodynamic table: %s.", strings.TrimSuffix(c[i:], "."))
			}
		}
	}
	s.para("The thermodynamic values are only as good as the model behind them; for safety or design work use reviewed reference data.")
}

// totalOrStat returns the σ_total column of a function, or its statistical
// σ when thermo.csv has no total.
func totalOrStat(th *thermoTable, key string) ([]float64, bool) {
	if t := th.get(key + "_sigma_total"); t != nil {
		return t, true
	}
	return th.get(key + "_sigma"), false
}

// widest returns the largest 2σ/|y| of the series.
func widest(y, sig []float64) float64 {
	w := 0.0
	for i := range y {
		if finite(sig[i]) && finite(y[i]) && y[i] != 0 {
			w = math.Max(w, 2*sig[i]/math.Abs(y[i]))
		}
	}
	return w
}
