package fitsfile

import (
	"fmt"
	"strings"
)

// Header is the ordered list of cards of one HDU, without the END card.
type Header struct {
	Cards []Card
}

// Lookup returns the first card with the given keyword.
func (h *Header) Lookup(key string) (Card, bool) {
	for _, c := range h.Cards {
		if c.Key == key && !isCommentary(key) {
			return c, true
		}
	}
	return Card{}, false
}

// Has reports whether the header holds a card with the given keyword.
func (h *Header) Has(key string) bool {
	_, ok := h.Lookup(key)
	return ok
}

// String returns the string value of key. ok is false when the keyword is
// absent; err is non-nil when it is present with another type.
func (h *Header) String(key string) (s string, ok bool, err error) {
	c, ok := h.Lookup(key)
	if !ok {
		return "", false, nil
	}
	s, isStr := c.Value.(string)
	if !isStr {
		return "", true, fmt.Errorf("%s is %s (%s); must be a string", key, typeName(c.Value), valueText(c.Value))
	}
	return s, true, nil
}

// Int returns the integer value of key, with ok and err as for String.
func (h *Header) Int(key string) (n int, ok bool, err error) {
	c, ok := h.Lookup(key)
	if !ok {
		return 0, false, nil
	}
	n, isInt := c.Value.(int)
	if !isInt {
		return 0, true, fmt.Errorf("%s is %s (%s); must be an integer", key, typeName(c.Value), valueText(c.Value))
	}
	return n, true, nil
}

// Float returns the numeric value of key; integers are accepted.
func (h *Header) Float(key string) (f float64, ok bool, err error) {
	c, ok := h.Lookup(key)
	if !ok {
		return 0, false, nil
	}
	switch v := c.Value.(type) {
	case float64:
		return v, true, nil
	case int:
		return float64(v), true, nil
	}
	return 0, true, fmt.Errorf("%s is %s (%s); must be a number", key, typeName(c.Value), valueText(c.Value))
}

// Bool returns the logical value of key.
func (h *Header) Bool(key string) (b bool, ok bool, err error) {
	c, ok := h.Lookup(key)
	if !ok {
		return false, false, nil
	}
	b, isBool := c.Value.(bool)
	if !isBool {
		return false, true, fmt.Errorf("%s is %s (%s); must be T or F", key, typeName(c.Value), valueText(c.Value))
	}
	return b, true, nil
}

// Commentary returns, in order, the texts of the cards with the given
// commentary keyword ("HISTORY" or "COMMENT").
func (h *Header) Commentary(key string) []string {
	var out []string
	for _, c := range h.Cards {
		if c.Key == key && c.Value == nil {
			out = append(out, c.Comment)
		}
	}
	return out
}

// ExtName returns the EXTNAME of the header, trimmed, or "".
func (h *Header) ExtName() string {
	s, _, err := h.String("EXTNAME")
	if err != nil {
		return ""
	}
	return strings.TrimSpace(s)
}

func valueText(v any) string {
	switch v := v.(type) {
	case string:
		return "'" + v + "'"
	case bool:
		if v {
			return "T"
		}
		return "F"
	case nil:
		return "no value"
	case float64:
		return formatFloat(v)
	}
	return fmt.Sprint(v)
}
