// Package assign is bandwright's assignment stage: from a picked peak list
// and rough starting constants to an assigned line list that `bandwright fit`
// reads directly.
//
// Inputs are a peak list (ReadPeaks: position, optional unc, intensity and
// unit), starting constants (ReadStart: a TOML file in the equilibrium
// notation ωe, ωexe, Be, αe, De, …, or StartFromConstants: a constants record
// of an earlier fit), the bands looked for in every species, the kind of
// spectrum (selection rules: infrared ΔJ = ±1; Raman ΔJ = 0, ±2; pure
// rotation ΔJ = +1 with v′ = v″) and the temperature for predicted
// intensities.
//
// Assign works in four steps (see its doc comment): predict every band with
// relative intensities (IntensityModel); lock each band, strongest first,
// with a search in a common offset and a common error of B (Lock); match peaks
// to predictions one to one by a minimum-cost assignment on the sparse
// candidate graph, fit, re-predict with the fit's covariance and extend to
// higher J until nothing changes; and check with combination differences,
// dropping the lines that break them with the reason.
//
// Conventions: positions in cm⁻¹ inside (peaks in MHz are converted with
// 1 cm⁻¹ = 29 979.2458 MHz and written back in their own unit); uncertainties
// 1σ; the internal fit is a term-values model per isotopologue (T_v, B_v, D_v, H_v,
// L_v, the terms the data cannot determine held at the starting values) with
// the covariance convention of package fit; later bands of a molecule are
// locked from a joint Dunham fit (mass-scaled across isotopologues) of the
// lines already assigned.
package assign
