package xyz_test

import (
	"fmt"
	"log"
	"os"
	"strings"

	"gapflux/scan/xyz"
	"gonum.org/v1/gonum/spatial/r3"
)

func ExampleDecode() {
	const file = `# base scan, exported from the lab's profilometer
id;X [mm];Y [mm];Z [mm];quality
1;0,0;0,0;0,052;0,9
2;10,0;0,0;0,021;0,8
3;10,0;10,0;0,000;0,9
`
	c, err := xyz.Decode(strings.NewReader(file), xyz.Options{Name: "base.csv"})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%d points, delimiter %q, unit %q, header %v\n", len(c.Points), c.Delimiter, c.UnitHint, c.HasHeader)
	fmt.Println(c.Points[1])

	_, err = xyz.Decode(strings.NewReader("1 2 3\n4 5\n"), xyz.Options{Name: "short.xyz"})
	fmt.Println(err)
	// Output:
	// 3 points, delimiter ';', unit "mm", header true
	// {10 0 0.021}
	// short.xyz: line 2, column 4: too few columns: 2, need 3 as the first line sets; fix or remove this line
}

func ExampleWrite() {
	c := &xyz.Cloud{}
	c.Points = append(c.Points, r3.Vec{X: 1.5, Y: -2, Z: 0.25})
	if err := xyz.Write(os.Stdout, c, xyz.WriteOptions{Delimiter: ',', Header: true, Unit: "mm"}); err != nil {
		log.Fatal(err)
	}
	// Output:
	// x_mm,y_mm,z_mm
	// 1.5,-2,0.25
}
