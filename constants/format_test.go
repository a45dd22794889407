package constants

import (
	"math"
	"testing"
)

// TestFormatParen checks the parenthetical notation of the trade (common
// practice): the uncertainty in units of the last digit, two digits when its
// leading digit is 1 or 2, one otherwise. The first three rows are the
// examples of the design document and of Huber & Herzberg's CO constants.
func TestFormatParen(t *testing.T) {
	for _, tc := range []struct {
		v, s float64
		want string
	}{
		{1.922529, 0.000003, "1.922529(3)"},
		{2169.81358, 0.00023, "2169.81358(23)"},
		{-6.1215e-6, 1.2e-9, "-6.1215(12)e-06"},
		{1.93128087, 0.00000012, "1.93128087(12)"},
		{13.28831, 0.0005, "13.2883(5)"},
		{13.28831, 0.00296, "13.288(3)"},
		{0.010511, 0.000021, "0.010511(21)"},
		// σ of 1 to 9 and larger than one in the last integer digit.
		{2169.8, 1.3, "2169.8(13)"},
		{2169.8, 4.2, "2170(4)"},
		{2169.8, 23, "2170(23)"},
		{2169.8, 350, "2200(400)"},
		{12.5, 70, "10(70)"},
		// σ larger than the value itself.
		{3e-12, 1.2e-11, "0.3(12)e-11"},
		{1e-4, 5e-4, "1(5)e-04"},
		// Frequencies in MHz are written out (the 12C16O J=1-0 line, from
		// memory); numbers from 10⁸ on take an exponent.
		{115271.2018, 0.0005, "115271.2018(5)"},
		{6.5048e7, 12, "65048000(12)"},
		{1.23456789e9, 40, "1.23456789(4)e+09"},
		// σ = 0 or not finite: the value alone.
		{1.5, 0, "1.5"},
		{-2.25, 0, "-2.25"},
		{1.5, math.NaN(), "1.5"},
		{1.5, math.Inf(1), "1.5"},
		{math.NaN(), 1, "NaN"},
		// A value that rounds to zero is written without a sign.
		{-0.2, 3, "0(3)"},
		{-0.00001, 0.012, "0.000(12)"},
	} {
		if got := FormatParen(tc.v, tc.s); got != tc.want {
			t.Errorf("FormatParen(%g, %g) = %q, want %q", tc.v, tc.s, got, tc.want)
		}
	}
}

// TestFormatRounded: a rounded constant keeps the digits down to its
// rounding unit, with σ in units of that last digit.
func TestFormatRounded(t *testing.T) {
	for _, tc := range []struct {
		v, s, unit float64
		want       string
	}{
		{1.92252933, 3e-7, 1e-8, "1.92252933(30)"},
		{57635.96822, 0.0021, 1e-4, "57635.9682(21)"},
		{183.5049, 0.012, 1e-4, "183.5049(120)"},
		{-6.12147e-6, 1.2e-9, 1e-11, "-6.12147(120)e-06"},
		{1.5, 0, 0.1, "1.5"},
		// No rounding unit: the parenthetical notation of FormatParen.
		{1.5, 0.2, 0, "1.50(20)"},
	} {
		if got := FormatRounded(tc.v, tc.s, tc.unit); got != tc.want {
			t.Errorf("FormatRounded(%g, %g, %g) = %q, want %q", tc.v, tc.s, tc.unit, got, tc.want)
		}
	}
}
