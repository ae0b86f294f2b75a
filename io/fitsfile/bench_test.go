package fitsfile

import (
	"bytes"
	"testing"
)

// BenchmarkTableRead reads every cell of a 10000-row table with a scalar
// and a 64-element vector column; the accessors must not allocate.
func BenchmarkTableRead(b *testing.B) {
	const rows, nw = 10000, 64
	var buf bytes.Buffer
	w := NewWriter(&buf)
	w.WriteImage(nil, nil, nil)
	if err := w.WriteTable("T", rows, []ColumnSpec{
		{Name: "ID", Type: 'I', Data: make([]int, rows)},
		{Name: "V", Type: 'D', Repeat: nw, Data: make([]float64, rows*nw)},
		{Name: "F", Type: 'L', Repeat: nw, Data: make([]bool, rows*nw)},
	}, nil); err != nil {
		b.Fatal(err)
	}
	f, err := Parse(buf.Bytes())
	if err != nil {
		b.Fatal(err)
	}
	tab, _ := f.HDUs[1].Table()
	id, v, fl := make([]int, 1), make([]float64, nw), make([]bool, nw)
	cID, cV, cF := tab.Column("ID"), tab.Column("V"), tab.Column("F")
	b.ReportAllocs()
	b.SetBytes(int64(len(f.HDUs[1].Data)))
	for b.Loop() {
		for r := 0; r < rows; r++ {
			tab.Ints(id, cID, r)
			tab.Float64s(v, cV, r)
			tab.Bools(fl, cF, r)
		}
	}
}

func TestTableReadAllocs(t *testing.T) {
	data, _ := sampleTable(t)
	f, _ := Parse(data)
	tab, _ := f.HDUs[1].Table()
	v := make([]float64, 3)
	c := tab.Column("XYZ")
	if n := testing.AllocsPerRun(100, func() { tab.Float64s(v, c, 1) }); n != 0 {
		t.Errorf("Float64s allocates %v times per call", n)
	}
}
