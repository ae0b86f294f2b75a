package dataset

import (
	"strings"
	"testing"
	"unicode"
)

// TestTypeTable checks the rules the rest of the project relies on: row i is bit i, words
// and FITS keys are distinct, keys keep CHI2<Key> and NPT<Key> within the eight characters
// of a FITS keyword (FITS standard 4.0, sect. 4.1.2.1), phases and only phases carry the
// degree unit, and every type's word reads back.
func TestTypeTable(t *testing.T) {
	words, keys := map[string]bool{}, map[string]bool{}
	var all DataType
	for i, r := range typeTable {
		if r.Type != DataType(1)<<i || r.Type.Index() != i || DataTypes()[i] != r.Type || r.Type.Info().Word != r.Word {
			t.Errorf("row %d: type %d is not bit %d", i, r.Type, i)
		}
		all |= r.Type
		if r.Word == "" || strings.ToLower(r.Word) != r.Word || strings.ContainsFunc(r.Word, func(c rune) bool { return !unicode.IsLetter(c) && !unicode.IsDigit(c) }) || words[r.Word] {
			t.Errorf("row %d: word %q is empty, not lower-case alphanumeric or repeated", i, r.Word)
		}
		words[r.Word] = true
		if r.Key == "" || len("CHI2"+r.Key) > 8 || strings.ToUpper(r.Key) != r.Key || keys[r.Key] {
			t.Errorf("row %d: FITS key %q is empty, too long, not upper case or repeated", i, r.Key)
		}
		keys[r.Key] = true
		if r.Label == "" || !strings.HasPrefix(r.Table, "OI_") || r.count == nil {
			t.Errorf("row %d: label %q, table %q, count %v", i, r.Label, r.Table, r.count != nil)
		}
		if r.Phase != (r.Unit == "°") {
			t.Errorf("row %d: phase %v with unit %q", i, r.Phase, r.Unit)
		}
		if got, err := ParseDataTypes(strings.ToUpper(r.Word)); err != nil || got != r.Type {
			t.Errorf("row %d: ParseDataTypes(%q) = %v, %v", i, r.Word, got, err)
		}
	}
	if all != AllTypes {
		t.Errorf("AllTypes = %b, the rows give %b", AllTypes, all)
	}
	for table := range map[string]bool{"OI_VIS2": true, "OI_T3": true, "OI_VIS": true} {
		w := tableWord(table)
		if words[w] && w != "vis2" {
			t.Errorf("the word of table %s, %q, is also a type's word", table, w)
		}
	}
}

func TestParseDataTypes(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want DataType
		err  string
	}{
		{"vis2", Vis2, ""},
		{" T3 ", T3Amp | T3Phi, ""},
		{"vis,t3phi", VisAmp | VisPhi | VisDiff | T3Phi, ""},
		{"visdiff", VisDiff, ""},
		{"vis2,,visphi", Vis2 | VisPhi, ""},
		{"vis2,t3,vis", AllTypes, ""},
		{"", 0, "no data type given"},
		{" , ", 0, "no data type given"},
		{"vis2,closure", 0, `unknown data type "closure" (use vis2, t3amp, t3phi, t3, visamp, visphi, visdiff, vis)`},
	} {
		got, err := ParseDataTypes(tc.in)
		if tc.err != "" {
			if err == nil || err.Error() != tc.err {
				t.Errorf("%q: error %v, want %q", tc.in, err, tc.err)
			}
			continue
		}
		if err != nil || got != tc.want {
			t.Errorf("%q: %v, %v; want %v", tc.in, got, err, tc.want)
		}
	}
	if s := (Vis2 | T3Phi | VisPhi).String(); s != "vis2+t3phi+visphi" {
		t.Errorf("String: %q", s)
	}
	if s := DataType(0).String(); s != "none" {
		t.Errorf("String of no type: %q", s)
	}
	defer func() {
		if recover() == nil {
			t.Error("Index of two types did not panic")
		}
	}()
	(Vis2 | T3Amp).Index()
}
