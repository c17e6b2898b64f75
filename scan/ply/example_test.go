package ply_test

import (
	"bytes"
	"fmt"
	"log"
	"strings"

	"gapflux/scan/ply"
	"gonum.org/v1/gonum/spatial/r3"
)

func ExampleDecode() {
	const file = `ply
format ascii 1.0
comment base of a 24 cm pan, mm
element vertex 4
property float x
property float y
property float z
property uchar intensity
element face 1
property list uchar int vertex_indices
end_header
0 0 0.05 200
10 0 0.02 180
10 10 0 170
0 10 0.01 190
4 0 1 2 3
`
	c, err := ply.Decode(strings.NewReader(file), ply.Options{Name: "base.ply"})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(c.Format, len(c.Points), c.Points[1], c.Faces, c.Comments)

	_, err = ply.Decode(strings.NewReader(strings.Replace(file, "10 10 0 170", "10 10 nan 170", 1)), ply.Options{Name: "bad.ply"})
	fmt.Println(err)
	// Output:
	// ascii 4 {10 0 0.02} [[0 1 2] [0 2 3]] [base of a 24 cm pan, mm]
	// bad.ply: line 14, column 7: element vertex 2: property "z": coordinate is not finite
}

func ExampleWrite() {
	var buf bytes.Buffer
	c := &ply.Cloud{Points: []r3.Vec{{X: 0, Y: 0, Z: 0.5}, {X: 1, Y: 0, Z: 0}, {X: 0, Y: 1, Z: 0}}, Faces: [][3]int32{{0, 1, 2}}}
	if err := ply.Write(&buf, c, ply.WriteOptions{Format: ply.ASCII, Comments: []string{"synthetic"}}); err != nil {
		log.Fatal(err)
	}
	fmt.Print(buf.String())
	// Output:
	// ply
	// format ascii 1.0
	// comment synthetic
	// element vertex 3
	// property float x
	// property float y
	// property float z
	// element face 1
	// property list uchar int vertex_indices
	// end_header
	// 0 0 0.5
	// 1 0 0
	// 0 1 0
	// 3 0 1 2
}
