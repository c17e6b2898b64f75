package decimal

import (
	"math"
	"strconv"
	"testing"
)

func TestParseInt(t *testing.T) {
	tests := []struct {
		in   string
		want int64
		ok   bool
	}{
		{"0", 0, true}, {"-12", -12, true}, {"+7", 7, true},
		{"9223372036854775807", math.MaxInt64, true},
		{"-9223372036854775808", math.MinInt64, true},
		{"9223372036854775808", 0, false},
		{"", 0, false}, {"-", 0, false}, {"1.0", 0, false}, {"12a", 0, false},
	}
	for _, tt := range tests {
		got, ok := ParseInt([]byte(tt.in))
		if ok != tt.ok || got != tt.want {
			t.Errorf("ParseInt(%q) = %d, %v; want %d, %v", tt.in, got, ok, tt.want, tt.ok)
		}
	}
}

// TestParseFloatAgreesWithStrconv: the fast path and its fallback give the
// bits strconv.ParseFloat gives (strconv is the reference).
func TestParseFloatAgreesWithStrconv(t *testing.T) {
	for i := 0; i < 20000; i++ {
		x := math.Float64frombits(uint64(i) * 0x9e3779b97f4a7c15 >> 3)
		for _, s := range []string{strconv.FormatFloat(x, 'g', -1, 64), strconv.FormatFloat(x, 'f', 6, 64)} {
			want, err := strconv.ParseFloat(s, 64)
			got, ok := ParseFloat([]byte(s), false)
			if (err == nil) != ok || (ok && got != want && !math.IsNaN(want)) {
				t.Fatalf("ParseFloat(%q) = %v, %v; strconv %v, %v", s, got, ok, want, err)
			}
		}
	}
}
