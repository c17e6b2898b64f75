// Package decimal parses decimal numbers from byte slices without
// allocating, for the scan readers' hot loops.
package decimal

import (
	"strconv"
	"strings"
)

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// ParseFloat parses the decimal number in b, with ',' as the decimal
// separator too when comma is set. It takes the exact fast path (mantissa
// below 2^53, power of ten at most 22; Clinger 1990) when it can and falls
// back to strconv.ParseFloat, which also accepts "nan" and "inf"; the
// caller checks finiteness. ok is false when b is not a number.
func ParseFloat(b []byte, comma bool) (f float64, ok bool) {
	i := 0
	neg := false
	if i < len(b) && (b[i] == '+' || b[i] == '-') {
		neg = b[i] == '-'
		i++
	}
	var mant uint64
	exp, digits := 0, 0
	slow := false
	for ; i < len(b) && b[i]-'0' < 10; i++ {
		if mant < 1e18 {
			mant = mant*10 + uint64(b[i]-'0')
		} else {
			slow = true
		}
		digits++
	}
	if i < len(b) && (b[i] == '.' || comma && b[i] == ',') {
		for i++; i < len(b) && b[i]-'0' < 10; i++ {
			if mant < 1e18 {
				mant = mant*10 + uint64(b[i]-'0')
				exp--
			} else {
				slow = true
			}
			digits++
		}
	}
	if digits == 0 {
		return parseSlow(b, comma)
	}
	if i < len(b) && (b[i] == 'e' || b[i] == 'E') {
		i++
		eneg := false
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		if i == len(b) {
			return 0, false
		}
		e := 0
		for ; i < len(b) && b[i]-'0' < 10; i++ {
			if e < 100000 {
				e = e*10 + int(b[i]-'0')
			}
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	if i != len(b) {
		return parseSlow(b, comma)
	}
	if slow || mant >= 1<<53 || exp < -22 || exp > 22 {
		if mant == 0 && !slow {
			f = 0
		} else {
			return parseSlow(b, comma)
		}
	} else {
		f = float64(mant)
		if exp < 0 {
			f /= pow10[-exp]
		} else {
			f *= pow10[exp]
		}
	}
	if neg {
		f = -f
	}
	return f, true
}

func parseSlow(b []byte, comma bool) (float64, bool) {
	s := string(b)
	if comma {
		if strings.Count(s, ",") > 1 || strings.Contains(s, ".") && strings.Contains(s, ",") {
			return 0, false
		}
		s = strings.Replace(s, ",", ".", 1)
	}
	f, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if ne, ok := err.(*strconv.NumError); ok && ne.Err == strconv.ErrRange {
			return f, true
		}
		return 0, false
	}
	return f, true
}

// ParseInt parses a decimal integer with an optional sign. ok is false
// when b is not an integer or does not fit in an int64.
func ParseInt(b []byte) (n int64, ok bool) {
	i := 0
	neg := false
	if len(b) > 0 && (b[0] == '+' || b[0] == '-') {
		neg = b[0] == '-'
		i++
	}
	if i == len(b) {
		return 0, false
	}
	var u uint64
	for ; i < len(b); i++ {
		c := b[i] - '0'
		if c > 9 || u > (1<<63)/10 {
			return 0, false
		}
		u = u*10 + uint64(c)
	}
	if neg {
		if u > 1<<63 {
			return 0, false
		}
		return -int64(u), true
	}
	if u > 1<<63-1 {
		return 0, false
	}
	return int64(u), true
}
