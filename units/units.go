// Package units is the one home of the physical constants and unit factors
// bandwright uses. Every value is a Go constant derived from
// gonum.org/v1/gonum/unit/constant (CODATA 2018; the SI fixes h, c, k and N_A
// exactly), so no value is typed twice and none can be changed at run time.
//
// Internal unit of energy: cm⁻¹ (wavenumber). Temperatures in K, masses in u
// (unified atomic mass units), molar quantities in J mol⁻¹ K⁻¹.
package units

import "gonum.org/v1/gonum/unit/constant"

// MHzPerWavenumber is the frequency in MHz of radiation of wavenumber 1 cm⁻¹:
// c × 100 cm/m × 10⁻⁶ MHz/Hz = 29 979.2458 MHz, exact since the SI fixes c.
const MHzPerWavenumber = float64(constant.LightSpeedInVacuum) * 100 / 1e6

// SecondRadiation is the second radiation constant c₂ = hc/k in cm K
// (1.438 776 877… cm K): a level E cm⁻¹ above the ground level is populated
// in proportion to exp(−c₂E/T), and E/k = c₂·E in K.
const SecondRadiation = float64(constant.Planck) * float64(constant.LightSpeedInVacuum) * 100 / float64(constant.Boltzmann)

// GasConstant is the molar gas constant R = N_A·k in J mol⁻¹ K⁻¹
// (8.314 462 618… J mol⁻¹ K⁻¹, exact in the SI).
const GasConstant = float64(constant.Avogadro) * float64(constant.Boltzmann)

// ElectronMass is the electron mass in u (CODATA 2018, from memory:
// 5.485 799 090 65(16)e-4 u; gonum's unit/constant does not carry it). It
// enters the Born–Oppenheimer-breakdown terms (m_e/M)·Δ_kl of the Dunham
// model.
const ElectronMass = 5.48579909065e-4
