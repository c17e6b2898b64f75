package stl

import (
	"math/rand/v2"
	"strconv"
)

// strconvRandom returns a random decimal string, seeded by i.
func strconvRandom(i uint64) string {
	r := rand.New(rand.NewPCG(i, 7))
	var s []byte
	if r.IntN(2) == 0 {
		s = append(s, '-')
	}
	s = strconv.AppendInt(s, int64(r.IntN(1e6)), 10)
	if r.IntN(4) > 0 {
		s = append(s, '.')
		s = strconv.AppendInt(s, int64(r.IntN(1e9)), 10)
	}
	if r.IntN(3) == 0 {
		s = append(s, 'e')
		s = strconv.AppendInt(s, int64(r.IntN(60)-30), 10)
	}
	return string(s)
}

func strconvParse(s string) (float64, error) { return strconv.ParseFloat(s, 64) }
