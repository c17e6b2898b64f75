package lowlp_test

import (
	"fmt"
	"log"
	"math/rand/v2"

	"gapflux/internal/lowlp"
)

// The highest plane z = a·x + b·y + c under four points, measured at the
// origin: maximise c subject to a·xᵢ + b·yᵢ + c ≤ zᵢ.
func ExampleSolve() {
	pts := [][3]float64{{-1, -1, 0.2}, {1, -1, 0.4}, {1, 1, 0.6}, {-1, 1, 0.4}}
	p := &lowlp.Problem{C: []float64{0, 0, 1}, Bound: []float64{10, 10, 10}}
	for _, q := range pts {
		p.A = append(p.A, q[0], q[1], 1)
		p.B = append(p.B, q[2])
	}
	x, v, err := lowlp.Solve(p, rand.New(rand.NewPCG(1, 2)))
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("a = %.2f, b = %.2f, c = %.2f, height at origin %.2f\n", x[0], x[1], x[2], v)
	// Output:
	// a = 0.10, b = 0.10, c = 0.40, height at origin 0.40
}
