package dataset

import (
	"errors"
	"fmt"
	"math/bits"
	"strings"
)

// DataType is a bit set of the kinds of interferometric data a data set holds and a
// reconstruction uses.
type DataType uint

// The data types, one bit each in the order of the table of data types (typeTable). A closure
// triangle gives a T3Amp and a T3Phi measurement, a complex visibility a VisAmp and a VisPhi
// measurement; each may be valid while the other is not.
const (
	Vis2    DataType = 1 << iota // squared visibility, OI_VIS2 VIS2DATA
	T3Amp                        // triple-product amplitude, OI_T3 T3AMP
	T3Phi                        // closure phase, OI_T3 T3PHI
	VisAmp                       // visibility amplitude, OI_VIS VISAMP
	VisPhi                       // absolute visibility phase, OI_VIS VISPHI
	VisDiff                      // differential visibility phase, OI_VIS VISPHI with PHITYP 'differential'

	// AllTypes selects every data type.
	AllTypes DataType = 1<<len(typeTable) - 1
)

// TypeInfo describes one data type: a row of the table of data types. Every list of data types
// in the project (the words of -use and -data-weights, FITS keys, summary and CSV columns, plot
// labels, the χ² report, the terms of the objective and of least-squares fits) is read from
// this table, in its order.
type TypeInfo struct {
	Type DataType
	// Word is the user's name of the type: in -use and -data-weights, in summaries and as the
	// key of JSON and CSV columns. It is lower case.
	Word string
	// Key is the abbreviation in FITS keywords (CHI2<Key>, NPT<Key>): at most three
	// characters, so that the keywords keep to eight.
	Key string
	// Label names the type in plots and summaries for people ("closure phase").
	Label string
	// Unit is the unit of the values shown to people: "" for dimensionless ratios, "°" for
	// phases (held in radians inside the code).
	Unit string
	// Table is the OIFITS table the data come from; its name without "OI_" in lower case is
	// the user's word for all the types of that table ("t3" for T3Amp and T3Phi).
	Table string
	// Phase says the values are angles: residuals are wrapped and the χ² term is the
	// wrap-safe one.
	Phase bool

	count func(d *Data) int // the number of usable measurements of the type in d
}

// typeTable is the table of data types, in the order of the χ² report, of the weights and of
// the DataType bits. Adding a data type is one row here, one bit above, and its term in
// package recon (DEVELOPERS.md, "How to add a data term").
var typeTable = [...]TypeInfo{
	{Type: Vis2, Word: "vis2", Key: "V2", Label: "V²", Table: "OI_VIS2",
		count: func(d *Data) int { return d.Vis2.Len() }},
	{Type: T3Amp, Word: "t3amp", Key: "T3A", Label: "T3 amplitude", Table: "OI_T3",
		count: func(d *Data) int { return countTrue(d.T3.AmpOK) }},
	{Type: T3Phi, Word: "t3phi", Key: "T3P", Label: "closure phase", Unit: "°", Table: "OI_T3", Phase: true,
		count: func(d *Data) int { return countTrue(d.T3.PhiOK) }},
	{Type: VisAmp, Word: "visamp", Key: "VA", Label: "visibility amplitude", Table: "OI_VIS",
		count: func(d *Data) int { return countTrue(d.Vis.AmpOK) }},
	{Type: VisPhi, Word: "visphi", Key: "VP", Label: "visibility phase", Unit: "°", Table: "OI_VIS", Phase: true,
		count: func(d *Data) int { return d.Vis.countPhi(PhiAbsolute) }},
	{Type: VisDiff, Word: "visdiff", Key: "VD", Label: "differential phase", Unit: "°", Table: "OI_VIS", Phase: true,
		count: func(d *Data) int { return d.Vis.countPhi(PhiDifferential) }},
}

// NTypes is the number of data types: the length of DataTypes() and of every array indexed
// by DataType.Index.
const NTypes = len(typeTable)

// typeList lists the single data types in the order of the table.
var typeList = func() (l [NTypes]DataType) {
	for i := range l {
		l[i] = typeTable[i].Type
	}
	return l
}()

// DataTypes returns the single data types in the order of the table: the order of the χ²
// report and of the weights.
func DataTypes() [NTypes]DataType { return typeList }

// Info returns the row of a single data type in the table of data types. It panics when t is
// not a single type.
func (t DataType) Info() TypeInfo { return typeTable[t.Index()] }

// countTrue returns the number of true values in ok.
func countTrue(ok []bool) int {
	n := 0
	for _, b := range ok {
		if b {
			n++
		}
	}
	return n
}

// countPhi returns the number of usable phases of type t.
func (p *VisPoints) countPhi(t PhiType) int {
	n := 0
	for i, ok := range p.PhiOK {
		if ok && p.PhiTyp[i] == t {
			n++
		}
	}
	return n
}

// String returns the words of the set bits joined by "+", e.g. "vis2+t3phi", and "none" for
// the empty set.
func (t DataType) String() string {
	if t == 0 {
		return "none"
	}
	var s []string
	for _, r := range typeTable {
		if t&r.Type != 0 {
			s = append(s, r.Word)
		}
	}
	return strings.Join(s, "+")
}

// Words returns the words of the set bits joined by ", ", e.g. "vis2, t3phi", for help texts.
func (t DataType) Words() string { return strings.ReplaceAll(t.String(), "+", ", ") }

// Index returns the position of a single data type in DataTypes(). It panics when t is not
// a single type.
func (t DataType) Index() int {
	i := bits.TrailingZeros(uint(t))
	if t == 0 || t&(t-1) != 0 || i >= NTypes {
		panic(fmt.Sprintf("dataset: %d is not a single data type", t))
	}
	return i
}

// tableWord is the user's word for all the types of an OIFITS table: "OI_T3" → "t3".
func tableWord(table string) string { return strings.ToLower(strings.TrimPrefix(table, "OI_")) }

// typeWords lists the words ParseDataTypes accepts, in table order, each table's word after
// its types when the table holds more than one (t3 after t3amp and t3phi).
func typeWords() []string {
	var w []string
	for i, r := range typeTable {
		w = append(w, r.Word)
		last := i+1 == NTypes || typeTable[i+1].Table != r.Table
		if last && tableWord(r.Table) != r.Word {
			w = append(w, tableWord(r.Table))
		}
	}
	return w
}

// ParseDataTypes reads a comma-separated list of data types, each given by its word
// (TypeInfo.Word, e.g. vis2 or t3phi) or by the word of its OIFITS table for all the types of
// that table (t3 for t3amp and t3phi, likewise vis), in any case, blanks ignored. The error
// names the unknown word and lists the known ones; it carries no package prefix, since it is
// about the user's text.
func ParseDataTypes(s string) (DataType, error) {
	var t DataType
	for _, w := range strings.Split(s, ",") {
		w = strings.ToLower(strings.TrimSpace(w))
		if w == "" {
			continue
		}
		found := false
		for _, r := range typeTable {
			if w == r.Word || w == tableWord(r.Table) {
				t |= r.Type
				found = true
			}
		}
		if !found {
			return 0, fmt.Errorf("unknown data type %q (use %s)", w, strings.Join(typeWords(), ", "))
		}
	}
	if t == 0 {
		return 0, errors.New("no data type given")
	}
	return t, nil
}
