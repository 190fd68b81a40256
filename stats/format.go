package stats

import (
	"math"
	"strconv"
	"strings"
)

// None is how a missing value prints.
const None = "–"

// Sig formats x with n significant digits in plain decimal notation (no
// exponent between 1e-6 and 1e12), without trailing zeros after the
// decimal point: Sig(776.7, 3) = "777", Sig(0.5, 4) = "0.5". NaN and
// infinities print as Go formats them.
func Sig(x float64, n int) string {
	switch {
	case math.IsNaN(x) || math.IsInf(x, 0):
		return strconv.FormatFloat(x, 'g', -1, 64)
	case x == 0:
		return "0"
	case math.Abs(x) < 1e-6 || math.Abs(x) >= 1e12:
		return strconv.FormatFloat(x, 'g', n, 64)
	}
	d := max(0, n-1-int(math.Floor(math.Log10(math.Abs(x)))))
	s := strconv.FormatFloat(x, 'f', d, 64)
	if d > 0 { // drop trailing zeros: 0.5000 → 0.5
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}

// PlusMinus formats mean ± half with the half-width to two significant
// digits and the mean rounded to the same decimal place (common practice
// for reporting an estimate with its uncertainty: "777 ± 39",
// "0.021 ± 0.032"). Without a half-width (NaN or infinite) or with a zero
// one (every replicate equal) the mean prints alone with four significant
// digits.
func PlusMinus(mean, half float64) string {
	if math.IsNaN(half) || half == 0 || math.IsInf(half, 0) {
		return Sig(mean, 4)
	}
	d := max(0, 1-int(math.Floor(math.Log10(half))))
	return unsignedZero(strconv.FormatFloat(mean, 'f', d, 64)) + " ± " + strconv.FormatFloat(half, 'f', d, 64)
}

// unsignedZero drops the sign of a number that rounded to zero: a mean of
// −0.3 shown to the units is "0", not "-0".
func unsignedZero(s string) string {
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		return s[1:]
	}
	return s
}

// Format formats e in display units, its mean and half-width multiplied by
// scale: None without a value, PlusMinus otherwise.
func (e Estimate) Format(scale float64) string {
	if e.N == 0 || math.IsNaN(e.Mean) {
		return None
	}
	return PlusMinus(e.Mean*scale, e.CI95*scale)
}
