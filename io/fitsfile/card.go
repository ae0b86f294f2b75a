package fitsfile

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// BlockSize is the FITS logical record length in bytes (Pence et al. 2010,
// sect. 3.1).
const BlockSize = 2880

// cardSize is the length of one header card (keyword record).
const cardSize = 80

// Card is one header keyword record.
//
// Value is one of: nil (a commentary card such as HISTORY or COMMENT, or a
// keyword without value), string, bool, int, float64, or RawValue for a
// value the reader could not classify (for example a complex number).
// For HISTORY, COMMENT and blank keywords the text is in Comment.
type Card struct {
	Key     string
	Value   any
	Comment string
}

// RawValue is a header value kept as its literal text because it is not a
// string, logical, integer or real number.
type RawValue string

// LongString is a string value that may be longer than the 68 characters one
// card holds between its quotes. It is written with the long-string
// convention of the FITS standard (version 4.0, Chen et al. 2018, sect.
// 4.2.1.2; recalled from memory): the value is cut into pieces, each but the
// last ending with '&', the first on the keyword's own card and the others
// on CONTINUE cards, which have blanks in columns 9-10 and the quoted piece
// from column 11; the comment goes on the last card. A value that fits one
// card is written exactly as a string. Parse joins the pieces back into one
// string value, so a LongString reads back as a string.
type LongString string

// continueKey is the keyword of the cards that carry the further pieces of
// a long string.
const continueKey = "CONTINUE"

// longStringKey is the keyword that announces the long-string convention
// (HEASARC's convention, 'OGIP 1.0'; no longer needed by the FITS standard
// 4.0, but fitsverify warns without it).
const longStringKey = "LONGSTRN"

// maxStringPiece is the longest text, quotes doubled, between the quotes of
// one card: 80 columns minus the keyword, the value indicator and the two
// quotes.
const maxStringPiece = cardSize - 10 - 2

// isCommentary reports whether key names a commentary keyword, whose card
// has no value indicator (Pence et al. 2010, sect. 4.4.2.4).
func isCommentary(key string) bool {
	return key == "HISTORY" || key == "COMMENT" || key == ""
}

// validKey reports whether key is a legal FITS keyword: at most 8
// characters from A-Z, 0-9, '-' and '_' (Pence et al. 2010, sect. 4.1.2.1).
func validKey(key string) bool {
	if len(key) > 8 {
		return false
	}
	for i := 0; i < len(key); i++ {
		c := key[i]
		if !(c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_') {
			return false
		}
	}
	return true
}

// formatFloat formats v as a FITS real: the shortest decimal that reads
// back to v, always with a decimal point and an upper-case exponent letter.
func formatFloat(v float64) string {
	s := strconv.FormatFloat(v, 'G', -1, 64)
	if !strings.ContainsAny(s, ".") {
		if i := strings.IndexByte(s, 'E'); i >= 0 {
			s = s[:i] + ".0" + s[i:]
		} else {
			s += ".0"
		}
	}
	return s
}

// encodeCards appends the 80-byte records of c to dst. Commentary text
// longer than one card continues on further cards with the same keyword.
func encodeCards(dst []byte, c Card) ([]byte, error) {
	if !validKey(c.Key) {
		return dst, fmt.Errorf("fitsfile: invalid keyword %q (at most 8 characters of A-Z, 0-9, '-', '_')", c.Key)
	}
	if err := checkText(c.Comment); err != nil {
		return dst, fmt.Errorf("fitsfile: keyword %s: comment %v", c.Key, err)
	}
	key := fmt.Sprintf("%-8s", c.Key)
	if c.Value == nil {
		// Long commentary continues on further cards of the same keyword, broken at
		// the last blank that fits when there is one in the second half of the card.
		text := c.Comment
		for {
			n := min(len(text), 72)
			next := n
			if n < len(text) {
				if i := strings.LastIndexByte(text[:n+1], ' '); i >= 36 {
					n, next = i, i+1
				}
			}
			dst = appendPadded(dst, key+text[:n])
			text = text[next:]
			if len(text) == 0 {
				return dst, nil
			}
		}
	}
	var val string
	switch v := c.Value.(type) {
	case string:
		if err := checkText(v); err != nil {
			return dst, fmt.Errorf("fitsfile: keyword %s: value %v", c.Key, err)
		}
		q := strings.ReplaceAll(v, "'", "''")
		q = strings.TrimRight(q, " ")
		if len(q) < 8 {
			q += strings.Repeat(" ", 8-len(q))
		}
		val = "'" + q + "'"
		if len(val) > 70 {
			return dst, fmt.Errorf("fitsfile: keyword %s: string value longer than 68 characters", c.Key)
		}
	case LongString:
		if err := checkText(string(v)); err != nil {
			return dst, fmt.Errorf("fitsfile: keyword %s: value %v", c.Key, err)
		}
		text := strings.TrimRight(string(v), " ")
		if len(text)+strings.Count(text, "'") <= maxStringPiece {
			return encodeCards(dst, Card{Key: c.Key, Value: text, Comment: c.Comment})
		}
		return encodeLongString(dst, key, text, c.Comment), nil
	case bool:
		val = fmt.Sprintf("%20s", map[bool]string{true: "T", false: "F"}[v])
	case int:
		val = fmt.Sprintf("%20d", v)
	case int64:
		val = fmt.Sprintf("%20d", v)
	case float64:
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return dst, fmt.Errorf("fitsfile: keyword %s: value %v cannot be written in a header", c.Key, v)
		}
		val = fmt.Sprintf("%20s", formatFloat(v))
	case RawValue:
		val = fmt.Sprintf("%20s", string(v))
	default:
		return dst, fmt.Errorf("fitsfile: keyword %s: unsupported value type %T", c.Key, c.Value)
	}
	rec := key + "= " + val
	if com := fitComment(c.Comment, cardSize-len(rec)-3); com != "" {
		rec += " / " + com
	}
	if len(rec) > cardSize {
		return dst, fmt.Errorf("fitsfile: keyword %s: card longer than 80 characters", c.Key)
	}
	return appendPadded(dst, rec), nil
}

// fitComment returns the comment as it fits in room characters: whole, or cut after its
// last whole word that fits (without a trailing separator), or "" when not even its first
// word fits, so that a card never ends in a fragment such as "S" of "SHA-256".
func fitComment(com string, room int) string {
	if len(com) <= room {
		return com
	}
	if room <= 0 {
		return ""
	}
	cut := strings.LastIndexByte(com[:room+1], ' ')
	if cut < 0 {
		return ""
	}
	return strings.TrimRight(com[:cut], " ,;:(")
}

// encodeLongString appends the cards of a string too long for one card
// (see LongString): text, without trailing blanks, is cut into pieces of at
// most maxStringPiece-1 characters once quotes are doubled (a doubled quote
// is never split), so that every piece but the last has room for its '&'.
// The comment goes on the last card, which is an extra one with an empty
// piece when the last piece leaves too little room; it is cut to the room
// left there.
func encodeLongString(dst []byte, key, text, comment string) []byte {
	var pieces []string
	var b strings.Builder
	for i := 0; i < len(text); i++ {
		ch := text[i]
		w := 1
		if ch == '\'' {
			w = 2
		}
		if b.Len()+w > maxStringPiece-1 {
			pieces = append(pieces, b.String())
			b.Reset()
		}
		b.WriteByte(ch)
		if w == 2 {
			b.WriteByte(ch)
		}
	}
	pieces = append(pieces, b.String())
	if last := pieces[len(pieces)-1]; comment != "" && 10+len(last)+2+3+len(comment) > cardSize {
		// The comment gets a card of its own, after an empty piece.
		pieces = append(pieces, "")
	}
	for i, p := range pieces {
		rec := key + "= '"
		if i > 0 {
			rec = fmt.Sprintf("%-10s'", continueKey)
		}
		if i < len(pieces)-1 {
			dst = appendPadded(dst, rec+p+"&'")
			continue
		}
		rec += p + "'"
		if com := fitComment(comment, cardSize-len(rec)-3); com != "" {
			rec += " / " + com
		}
		dst = appendPadded(dst, rec)
	}
	return dst
}

// checkText reports an error when s holds characters outside printable
// ASCII, which FITS headers do not allow (Pence et al. 2010, sect. 4.1.1).
func checkText(s string) error {
	for i := 0; i < len(s); i++ {
		if s[i] < 0x20 || s[i] > 0x7e {
			return fmt.Errorf("holds byte 0x%02x; only printable ASCII is allowed", s[i])
		}
	}
	return nil
}

func appendPadded(dst []byte, rec string) []byte {
	dst = append(dst, rec...)
	for i := len(rec); i < cardSize; i++ {
		dst = append(dst, ' ')
	}
	return dst
}

// parseCard decodes one 80-byte record. The returned error describes a
// malformed value; the key is always returned.
func parseCard(rec []byte) (Card, error) {
	key := strings.TrimRight(string(rec[:8]), " ")
	if isCommentary(key) || string(rec[8:10]) != "= " {
		return Card{Key: key, Comment: strings.TrimRight(string(rec[8:]), " ")}, nil
	}
	rest := string(rec[10:])
	trimmed := strings.TrimLeft(rest, " ")
	if strings.HasPrefix(trimmed, "'") {
		v, com, err := parseString(trimmed)
		if err != nil {
			return Card{Key: key}, fmt.Errorf("keyword %s: %v", key, err)
		}
		return Card{Key: key, Value: v, Comment: com}, nil
	}
	val, com := trimmed, ""
	if j := strings.IndexByte(trimmed, '/'); j >= 0 {
		val, com = trimmed[:j], strings.TrimSpace(trimmed[j+1:])
	}
	val = strings.TrimSpace(val)
	c := Card{Key: key, Comment: com}
	switch {
	case val == "":
		return c, nil
	case val == "T":
		c.Value = true
	case val == "F":
		c.Value = false
	default:
		if n, err := strconv.ParseInt(val, 10, 64); err == nil {
			c.Value = int(n)
			return c, nil
		}
		fs := strings.Map(func(r rune) rune {
			if r == 'D' || r == 'd' {
				return 'E'
			}
			return r
		}, val)
		if f, err := strconv.ParseFloat(fs, 64); err == nil && isFITSReal(fs) {
			c.Value = f
			return c, nil
		}
		c.Value = RawValue(val)
	}
	return c, nil
}

// parseString decodes a quoted string value at the start of s (which begins
// with the opening quote) and the comment after it. Doubled quotes stand for
// one; trailing blanks of the value are not significant (Pence et al. 2010,
// sect. 4.2.1.1) and are removed.
func parseString(s string) (val, com string, err error) {
	var b strings.Builder
	i := 1
	closed := false
	for i < len(s) {
		if s[i] == '\'' {
			if i+1 < len(s) && s[i+1] == '\'' {
				b.WriteByte('\'')
				i += 2
				continue
			}
			closed = true
			i++
			break
		}
		b.WriteByte(s[i])
		i++
	}
	if !closed {
		return "", "", fmt.Errorf("string value has no closing quote")
	}
	if j := strings.IndexByte(s[i:], '/'); j >= 0 {
		com = strings.TrimSpace(s[i+j+1:])
	}
	return strings.TrimRight(b.String(), " "), com, nil
}

// continuation decodes a CONTINUE card of the long-string convention (see
// LongString): ok is false when rec is not one, that is when it lacks the
// keyword, has something other than blanks in columns 9-10 or no quoted
// string from column 11 on.
func continuation(rec []byte) (piece, com string, ok bool, err error) {
	if string(rec[:10]) != fmt.Sprintf("%-10s", continueKey) {
		return "", "", false, nil
	}
	rest := strings.TrimLeft(string(rec[10:]), " ")
	if !strings.HasPrefix(rest, "'") {
		return "", "", false, nil
	}
	piece, com, err = parseString(rest)
	if err != nil {
		return "", "", false, fmt.Errorf("keyword %s: %v", continueKey, err)
	}
	return piece, com, true, nil
}

// isFITSReal rejects the spellings strconv accepts but FITS does not, such
// as "Inf", "NaN" and hexadecimal floats.
func isFITSReal(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c == '.' || c == 'E' || c == 'e' || c == '+' || c == '-') {
			return false
		}
	}
	return true
}

// typeName names the Go type of a header value for error messages.
func typeName(v any) string {
	switch v.(type) {
	case nil:
		return "missing"
	case string:
		return "a string"
	case bool:
		return "a logical"
	case int:
		return "an integer"
	case float64:
		return "a real number"
	default:
		return "unparsable"
	}
}
