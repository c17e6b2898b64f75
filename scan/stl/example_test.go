package stl_test

import (
	"bytes"
	"fmt"
	"log"

	"gapflux/scan/stl"
	"gonum.org/v1/gonum/spatial/r3"
)

func ExampleDecode() {
	// Many binary files start their header with "solid"; the size decides.
	var buf bytes.Buffer
	err := stl.WriteBinary(&buf, &stl.Mesh{
		Header:   "solid base scan",
		Vertices: []r3.Vec{{X: 0, Y: 0, Z: 0.5}, {X: 10, Y: 0, Z: 0.25}, {X: 0, Y: 10, Z: 0}},
	})
	if err != nil {
		log.Fatal(err)
	}
	m, err := stl.Decode(bytes.NewReader(buf.Bytes()), stl.Options{Name: "base.stl", SizeBytes: int64(buf.Len())})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(m.Binary, m.Facets(), m.Header, m.Vertices[1])

	_, err = stl.Decode(bytes.NewReader(buf.Bytes()[:100]), stl.Options{Name: "cut.stl", SizeBytes: -1})
	fmt.Println(err)
	// Output:
	// true 1 solid base scan {10 0 0.25}
	// cut.stl: byte 100: unexpected EOF in facet 0 of 1
}

func ExampleWriteASCII() {
	var buf bytes.Buffer
	err := stl.WriteASCII(&buf, &stl.Mesh{
		Header:   "tile",
		Vertices: []r3.Vec{{X: 0, Y: 0, Z: 0}, {X: 1.5, Y: 0, Z: 0}, {X: 0, Y: 1.5, Z: 0}},
		Normals:  []r3.Vec{{X: 0, Y: 0, Z: 1}},
	})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Print(buf.String())
	// Output:
	// solid tile
	//   facet normal 0e+00 0e+00 1e+00
	//     outer loop
	//       vertex 0e+00 0e+00 0e+00
	//       vertex 1.5e+00 0e+00 0e+00
	//       vertex 0e+00 1.5e+00 0e+00
	//     endloop
	//   endfacet
	// endsolid tile
}
