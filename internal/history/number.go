// File: Exact parsing of plain decimals without strconv when the mantissa and
// the power of ten are exact doubles (the fast path of Clinger 1990,
// "How to read floating point numbers accurately"); other numbers go to
// strconv.ParseFloat.

package history

import (
	"errors"
	"math"
	"strconv"
)

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseDecimal reads a plain decimal number, [+-]d[.d][(e|E)[+-]d], when
// it can do so exactly, and reports false otherwise (the caller then uses
// strconv.ParseFloat). With at most 15 significant digits (so the integer
// mantissa w < 2^53 is exact) and a decimal exponent |q| ≤ 22 (so 10^|q| is
// exact), w·10^q or w/10^−q is one correctly rounded IEEE operation on
// exact operands, hence the same bits strconv.ParseFloat returns (Clinger's
// fast path: W. D. Clinger, "How to read floating point numbers
// accurately", PLDI 1990).
func parseDecimal(b []byte) (float64, bool) {
	i, n := 0, len(b)
	if n == 0 || n > 40 {
		return 0, false
	}
	neg := false
	switch b[0] {
	case '+':
		i++
	case '-':
		neg = true
		i++
	}
	var w uint64
	digits, exp := 0, 0
	sawDigit, sawDot := false, false
	for ; i < n; i++ {
		c := b[i]
		switch {
		case c >= '0' && c <= '9':
			sawDigit = true
			if w == 0 && c == '0' {
				if sawDot {
					exp--
				}
				continue // leading zeros are not significant
			}
			if digits == 15 {
				return 0, false
			}
			w = w*10 + uint64(c-'0')
			digits++
			if sawDot {
				exp--
			}
		case c == '.' && !sawDot:
			sawDot = true
		default:
			goto exponent
		}
	}
exponent:
	if !sawDigit {
		return 0, false
	}
	if i < n {
		if b[i] != 'e' && b[i] != 'E' {
			return 0, false
		}
		i++
		eneg := false
		if i < n && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		if i == n {
			return 0, false
		}
		e := 0
		for ; i < n; i++ {
			c := b[i]
			if c < '0' || c > '9' || e > 1000 {
				return 0, false
			}
			e = e*10 + int(c-'0')
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	f := float64(w)
	switch {
	case w == 0:
		f = 0
	case exp == 0:
	case exp > 0 && exp <= 22:
		f *= pow10[exp]
	case exp < 0 && exp >= -22:
		f /= pow10[-exp]
	default:
		return 0, false
	}
	if neg {
		f = -f
	}
	return f, true
}

// parseNumber converts one field. It reports nonFinite for NaN and
// infinities (including spellings ParseFloat rejects, such as "-nan" or
// "1.#QNAN") and ok=false for anything else that is not a number.
func parseNumber(b []byte) (v float64, ok, nonFinite bool) {
	if v, ok := parseDecimal(b); ok {
		return v, true, false
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err == nil {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return v, true, true
		}
		return v, true, false
	}
	if errors.Is(err, strconv.ErrRange) {
		if math.IsInf(v, 0) {
			return v, true, true
		}
		return v, true, false // underflow to zero or a denormal
	}
	if looksNonFinite(b) {
		return math.NaN(), true, true
	}
	// Fortran double-precision exponent: 1.5D+03.
	if i := indexD(b); i > 0 && len(b) <= 64 {
		var buf [64]byte
		c := buf[:len(b)]
		copy(c, b)
		c[i] = 'e'
		if v, err := strconv.ParseFloat(string(c), 64); err == nil || errors.Is(err, strconv.ErrRange) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return v, true, true
			}
			return v, true, false
		}
	}
	return 0, false, false
}

func indexD(b []byte) int {
	for i, c := range b {
		if c == 'd' || c == 'D' {
			return i
		}
	}
	return -1
}
