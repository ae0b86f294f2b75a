package fitsfile_test

import (
	"bytes"
	"fmt"

	"vcz/io/fitsfile"
)

func Example() {
	var buf bytes.Buffer
	w := fitsfile.NewWriter(&buf)
	// A header-only primary HDU, then a table with a scalar and a vector column.
	if err := w.WriteImage(nil, nil, []fitsfile.Card{{Key: "ORIGIN", Value: "example"}}); err != nil {
		fmt.Println(err)
		return
	}
	err := w.WriteTable("POINTS", 2, []fitsfile.ColumnSpec{
		{Name: "NAME", Type: 'A', Repeat: 8, Data: []string{"first", "second"}},
		{Name: "XY", Type: 'D', Repeat: 2, Unit: "m", Data: []float64{1, 2, 3, 4}},
		{Name: "OK", Type: 'L', Data: []bool{true, false}},
	}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	f, err := fitsfile.Parse(buf.Bytes())
	if err != nil {
		fmt.Println(err)
		return
	}
	tab, err := f.HDUs[1].Table()
	if err != nil {
		fmt.Println(err)
		return
	}
	xy := make([]float64, 2)
	ok := make([]bool, 1)
	for r := 0; r < tab.Rows; r++ {
		name, _ := tab.String(tab.Column("NAME"), r)
		tab.Float64s(xy, tab.Column("XY"), r)
		tab.Bools(ok, tab.Column("OK"), r)
		fmt.Println(name, xy, tab.Column("XY").Unit, ok[0])
	}
	fmt.Println(len(buf.Bytes()), "bytes in", len(f.HDUs), "HDUs")
	// Output:
	// first [1 2] m true
	// second [3 4] m false
	// 8640 bytes in 2 HDUs
}

func ExampleParse_truncated() {
	var buf bytes.Buffer
	w := fitsfile.NewWriter(&buf)
	w.WriteImage([]int{100, 100}, make([]float64, 100*100), nil)
	_, err := fitsfile.Parse(buf.Bytes()[:10000])
	fmt.Println(err)
	// Output:
	// HDU 1: truncated file: the header declares 80000 bytes of data, but only 7120 bytes are left in the file
}
