package fitsfile

import (
	"encoding/binary"
	"math"
)

// The FITS checksum convention (Seaman, Pence & Rots 2002, "FITS Checksum Proposal";
// FITS standard 4.0, appendix J): DATASUM is the 32-bit ones' complement sum of the data
// unit as unsigned big-endian words, written as a decimal string; CHECKSUM is 16
// characters chosen so that the ones' complement sum of the whole HDU, header and data,
// is −0 (all bits set).

// onesAdd adds b to the ones' complement sum a, folding the carries back in.
func onesAdd(a, b uint32) uint32 {
	s := uint64(a) + uint64(b)
	return uint32(s&0xffffffff + s>>32)
}

// sumBytes returns the ones' complement sum of p (a multiple of 4 bytes) added to sum.
func sumBytes(sum uint32, p []byte) uint32 {
	var acc uint64 = uint64(sum)
	for i := 0; i+4 <= len(p); i += 4 {
		acc += uint64(binary.BigEndian.Uint32(p[i:]))
	}
	for acc>>32 != 0 {
		acc = acc&0xffffffff + acc>>32
	}
	return uint32(acc)
}

// sumFloat64s returns the ones' complement sum of data written as big-endian IEEE
// doubles; the zero padding of the data unit adds nothing.
func sumFloat64s(data []float64) uint32 {
	var acc uint64
	for _, v := range data {
		b := math.Float64bits(v)
		acc += b>>32 + b&0xffffffff
		if acc>>62 != 0 { // fold long before the accumulator can overflow
			acc = acc&0xffffffff + acc>>32
		}
	}
	for acc>>32 != 0 {
		acc = acc&0xffffffff + acc>>32
	}
	return uint32(acc)
}

// encodeChecksum returns the 16 characters of CHECKSUM for an HDU whose sum, with the
// CHECKSUM value still '0000000000000000', is sum: the complement of sum spread over
// printable characters (the proposal's section 3.2 algorithm), rotated by one character
// because the value begins at byte 11 of its card, one byte before a word boundary.
func encodeChecksum(sum uint32) string {
	exclude := [...]byte{0x3a, 0x3b, 0x3c, 0x3d, 0x3e, 0x3f, 0x40, 0x5b, 0x5c, 0x5d, 0x5e, 0x5f, 0x60}
	value := ^sum
	var asc [16]byte
	for i := 0; i < 4; i++ {
		b := int(value >> (24 - 8*i) & 0xff)
		q, r := b/4+'0', b%4
		ch := [4]int{q + r, q, q, q}
		for changed := true; changed; {
			changed = false
			for _, x := range exclude {
				for j := 0; j < 4; j += 2 {
					if byte(ch[j]) == x || byte(ch[j+1]) == x {
						ch[j]++
						ch[j+1]--
						changed = true
					}
				}
			}
		}
		for j := 0; j < 4; j++ {
			asc[4*j+i] = byte(ch[j])
		}
	}
	var out [16]byte
	for i := range out {
		out[i] = asc[(i+15)%16]
	}
	return string(out[:])
}
