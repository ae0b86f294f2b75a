package oifits

import (
	"bytes"
	"encoding/binary"
	"errors"
	"os"
	"testing"
)

// FuzzDecode checks that Decode never panics or hangs, that every error is
// an *Error, and that whatever it accepts can be encoded and read back.
//
// An input that begins with "SIMPLE" is a whole file. Any other input
// selects a base file with its first byte (even: the encoded sample file,
// odd: testdata/oifits/astropy-v1.oifits, an OIFITS v1 file written by
// astropy) followed by 4-byte edits: a big-endian 16-bit offset, a value
// byte and an operation byte (0 set the byte, 1 set a decimal digit, sign
// or blank, 2 cut the file at the offset, 3 insert the byte). Edits keep
// the inputs small, so the fuzzer mutates and minimizes them quickly while
// still reaching every table of a 35-70 kB file; whole-file seeds of that
// size make the fuzzer spend its time minimizing.
func FuzzDecode(f *testing.F) {
	sample := encodeSample(f)
	v1, err := os.ReadFile("../../testdata/oifits/astropy-v1.oifits")
	if err != nil {
		f.Fatal(err)
	}
	bases := [2][]byte{sample, v1}
	f.Add([]byte("SIMPLE  =                    T"))
	f.Add([]byte("not a FITS file"))
	edit := func(base byte, edits ...[4]byte) []byte {
		out := []byte{base}
		for _, e := range edits {
			out = append(out, e[:]...)
		}
		return out
	}
	at := func(off int, val, op byte) [4]byte { return [4]byte{byte(off >> 8), byte(off), val, op} }
	f.Add(edit(0))
	f.Add(edit(1))
	// Seeds aimed at header values of the sample's OI_VIS2 (HDU 6, at
	// 5*2880 bytes): NAXIS2 (card 5), OI_REVN; a cut inside a header and
	// one inside the data; a FLAG byte; a TFORM repeat count.
	f.Add(edit(0, at(5*2880+4*80+29, '9', 1)))
	f.Add(edit(0, at(5*2880+4*80+20, '9', 1), at(5*2880+4*80+29, '9', 1)))
	f.Add(edit(0, at(2*2880+500, 0, 2)))
	f.Add(edit(0, at(len(sample)-3000, 'T', 0)))
	f.Add(edit(1, at(3*2880+10*80+12, '7', 1)))
	f.Add(edit(1, at(6*2880+200, 0, 3)))
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) > 0 && !bytes.HasPrefix(data, []byte("SIMPLE")) {
			data = applyEdits(bases[data[0]%2], data[1:])
		}
		file, err := Decode(bytes.NewReader(data), "fuzz.oifits")
		if err != nil {
			var oe *Error
			if !errors.As(err, &oe) {
				t.Fatalf("error %v is %T, not *Error", err, err)
			}
			return
		}
		var buf bytes.Buffer
		if err := Encode(&buf, file); err != nil {
			// Decode accepts values Encode cannot write (for example
			// non-ASCII bytes in a string column); that is not a bug.
			return
		}
		if _, err := Decode(bytes.NewReader(buf.Bytes()), "again.oifits"); err != nil {
			t.Fatalf("re-reading an encoded file: %v", err)
		}
	})
}

// applyEdits applies the 4-byte edits of FuzzDecode to a copy of base.
func applyEdits(base, edits []byte) []byte {
	out := append([]byte(nil), base...)
	const digits = "0123456789-+ "
	for len(edits) >= 4 && len(out) > 0 {
		off := int(binary.BigEndian.Uint16(edits)) % len(out)
		val, op := edits[2], edits[3]
		edits = edits[4:]
		switch op % 4 {
		case 0:
			out[off] = val
		case 1:
			out[off] = digits[int(val)%len(digits)]
		case 2:
			out = out[:off]
		case 3:
			out = append(out[:off], append([]byte{val}, out[off:]...)...)
		}
	}
	return out
}
