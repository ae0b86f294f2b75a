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
		text := c.Comment
		for {
			n := min(len(text), 72)
			dst = appendPadded(dst, key+text[:n])
			text = text[n:]
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
	if c.Comment != "" {
		room := cardSize - len(rec) - 3
		if room > 0 {
			com := c.Comment
			if len(com) > room {
				com = com[:room]
			}
			rec += " / " + com
		}
	}
	if len(rec) > cardSize {
		return dst, fmt.Errorf("fitsfile: keyword %s: card longer than 80 characters", c.Key)
	}
	return appendPadded(dst, rec), nil
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
		var b strings.Builder
		i := 1
		closed := false
		for i < len(trimmed) {
			if trimmed[i] == '\'' {
				if i+1 < len(trimmed) && trimmed[i+1] == '\'' {
					b.WriteByte('\'')
					i += 2
					continue
				}
				closed = true
				i++
				break
			}
			b.WriteByte(trimmed[i])
			i++
		}
		if !closed {
			return Card{Key: key}, fmt.Errorf("keyword %s: string value has no closing quote", key)
		}
		com := ""
		if j := strings.IndexByte(trimmed[i:], '/'); j >= 0 {
			com = strings.TrimSpace(trimmed[i+j+1:])
		}
		// Trailing spaces in a string value are not significant (sect. 4.2.1.1).
		return Card{Key: key, Value: strings.TrimRight(b.String(), " "), Comment: com}, nil
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
