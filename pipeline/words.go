package pipeline

import (
	"fmt"
	"strings"
)

// counted writes n with the singular or plural noun: "1 check", "3 checks".
func counted(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// inputCounts describes what a scan file holds, for people: a mesh's
// triangles and its distinct vertices (an STL lists each vertex once per
// facet), or a cloud's points, with repeats said when there are any.
func inputCounts(f FileReport) string {
	distinct := f.DistinctPoints
	if distinct == 0 || distinct > f.Points {
		distinct = f.Points
	}
	if f.Triangles > 0 {
		return fmt.Sprintf("%s, %s", counted(f.Triangles, "triangle", "triangles"), counted(distinct, "distinct vertex", "distinct vertices"))
	}
	if distinct < f.Points {
		return fmt.Sprintf("%s, %d distinct", counted(f.Points, "point", "points"), distinct)
	}
	return counted(f.Points, "point", "points")
}

// stageError is an analysis step's error as users read it: the scan's
// name, the step in plain words, then the cause without the package and
// step prefixes the lower layers put on it ("scan: level: ", "thermal:
// heat-up: "), which would only repeat the step ("form: scan: form: ...").
type stageError struct {
	name, stage string
	err         error
}

func (e *stageError) Error() string {
	return e.name + ": " + e.stage + ": " + trimPrefixes(e.err.Error())
}

func (e *stageError) Unwrap() error { return e.err }

// stageErr wraps err as the failure of the analysis step stage of the
// scan name.
func stageErr(name, stage string, err error) error {
	return &stageError{name: name, stage: stage, err: err}
}

// layerPrefixes are the prefixes of the lower layers' errors that name a
// package and a step, which stageError drops.
var layerPrefixes = []string{
	"scan: level: ", "scan: grid: ", "scan: filter: ", "scan: form: ", "scan: shape: ", "scan: zernike: ",
	"contact: rest: ", "thermal: heat-up: ", "thermal: rings: ", "thermal: glass: ", "thermal: ", "scan: ", "contact: ",
}

// trimPrefixes drops the layer prefixes at the start of s.
func trimPrefixes(s string) string {
	for again := true; again; {
		again = false
		for _, p := range layerPrefixes {
			if len(s) > len(p) && s[:len(p)] == p {
				s, again = s[len(p):], true
			}
		}
	}
	return s
}

// unknownKeyText is the message for a job key that does not exist, with
// the nearest known key when one is close (a typo).
func unknownKeyText(key string) string {
	var keys []string
	for _, k := range jobKeys() {
		keys = append(keys, k.key)
	}
	if near := Nearest(key, keys); near != "" {
		return fmt.Sprintf("unknown key %q: did you mean %q? (\"gapflux job\" prints every key)", key, near)
	}
	return fmt.Sprintf("unknown key %q (\"gapflux job\" prints every key)", key)
}

// Nearest returns the candidate closest to word, a likely typo of it: at
// most two edits away (Levenshtein), or, for a word of three letters or
// more, a prefix of it or it a prefix of the candidate; "" when none is, or
// when word is itself a candidate.
func Nearest(word string, candidates []string) string {
	best, bestD := "", 3
	for _, c := range candidates {
		if c == word {
			return ""
		}
		d := editDistance(word, c)
		if d > 2 && len(word) >= 3 && (strings.HasPrefix(c, word) || strings.HasPrefix(word, c)) {
			d = 2
		}
		if d < bestD {
			best, bestD = c, d
		}
	}
	return best
}

// editDistance is the Levenshtein distance between a and b, in bytes.
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}
