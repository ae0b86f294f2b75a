package model

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"vcz/io/safefile"
)

// SpecError is an error in a model specification. Line is 1-based for
// TOML files (0 when unknown) and 0 for the command-line form; Item is the
// 1-based position of the component concerned (0 when none).
type SpecError struct {
	File string // file name, or "" for the command-line form
	Line int
	Item int
	Err  error
}

func (e *SpecError) Error() string {
	var b strings.Builder
	if e.File != "" {
		b.WriteString(e.File)
		if e.Line > 0 {
			fmt.Fprintf(&b, ":%d", e.Line)
		}
		b.WriteString(": ")
	} else {
		b.WriteString("model spec: ")
	}
	if e.Item > 0 {
		fmt.Fprintf(&b, "component %d: ", e.Item)
	}
	b.WriteString(strings.TrimPrefix(e.Err.Error(), "model: "))
	return b.String()
}

func (e *SpecError) Unwrap() error { return e.Err }

// Load reads a model from spec: when spec names an existing file it is read
// as a TOML model file (ParseTOML), otherwise spec itself is parsed in the
// compact form (ParseCompact).
func Load(spec string) (*Model, error) {
	if st, err := os.Stat(spec); err == nil && !st.IsDir() {
		src, err := safefile.ReadFile(spec)
		if err != nil {
			return nil, err
		}
		return ParseTOML(src, filepath.Base(spec))
	}
	if strings.HasSuffix(spec, ".toml") {
		return nil, fmt.Errorf("model: cannot read %s: no such file", spec)
	}
	return ParseCompact(spec)
}

// ParseCompact parses the compact command-line form of a model:
// components separated by ';', each "kind" or "kind:name=value,...". A
// parameter written "name~value" is free for a fit (starting at value),
// "name=value" is fixed; either may be followed by bounds "(min..max)"
// with either end left empty. Example:
//
//	ld:diameter~3.2(1..6),u_ld=0.3;point:x=5,y=-2,flux~0.1(0..)
//
// Spaces around items are ignored. Errors name the component by position.
func ParseCompact(s string) (*Model, error) {
	m := &Model{}
	items := strings.Split(s, ";")
	for i, item := range items {
		item = strings.TrimSpace(item)
		if item == "" {
			if len(items) == 1 {
				return nil, &SpecError{Err: errors.New("empty model")}
			}
			continue
		}
		kindStr, rest, _ := strings.Cut(item, ":")
		kindStr = strings.TrimSpace(kindStr)
		c, err := newDefault(Kind(kindStr))
		if err != nil {
			return nil, &SpecError{Item: i + 1, Err: err}
		}
		seen := map[string]bool{}
		if strings.TrimSpace(rest) != "" {
			for _, kv := range splitParams(rest) {
				kv = strings.TrimSpace(kv)
				if err := applyCompact(c, kv, seen); err != nil {
					return nil, &SpecError{Item: i + 1, Err: err}
				}
			}
		}
		if err := checkRequired(c, seen); err != nil {
			return nil, &SpecError{Item: i + 1, Err: err}
		}
		m.Components = append(m.Components, c)
	}
	if err := m.Validate(); err != nil {
		return nil, &SpecError{Err: err}
	}
	return m, nil
}

// splitParams splits on commas outside parentheses.
func splitParams(s string) []string {
	var out []string
	depth, start := 0, 0
	for i, r := range s {
		switch r {
		case '(':
			depth++
		case ')':
			depth--
		case ',':
			if depth == 0 {
				out = append(out, s[start:i])
				start = i + 1
			}
		}
	}
	return append(out, s[start:])
}

func applyCompact(c *Component, kv string, seen map[string]bool) error {
	i := strings.IndexAny(kv, "=~")
	if i < 0 {
		return fmt.Errorf("%s: %q is not name=value or name~value", c.kind, kv)
	}
	name := strings.TrimSpace(kv[:i])
	free := kv[i] == '~'
	val := strings.TrimSpace(kv[i+1:])
	lo, hi := math.Inf(-1), math.Inf(1)
	if j := strings.IndexByte(val, '('); j >= 0 {
		if !strings.HasSuffix(val, ")") {
			return fmt.Errorf("%s: %s: bounds %q lack a closing parenthesis", c.kind, name, val[j:])
		}
		b := val[j+1 : len(val)-1]
		val = strings.TrimSpace(val[:j])
		ls, hs, ok := strings.Cut(b, "..")
		if !ok {
			return fmt.Errorf("%s: %s: bounds %q are not (min..max)", c.kind, name, b)
		}
		var err error
		if ls = strings.TrimSpace(ls); ls != "" {
			if lo, err = strconv.ParseFloat(ls, 64); err != nil {
				return fmt.Errorf("%s: %s: lower bound %q is not a number", c.kind, name, ls)
			}
		}
		if hs = strings.TrimSpace(hs); hs != "" {
			if hi, err = strconv.ParseFloat(hs, 64); err != nil {
				return fmt.Errorf("%s: %s: upper bound %q is not a number", c.kind, name, hs)
			}
		}
	}
	if c.index(name) < 0 {
		return c.unknown(name)
	}
	if seen[name] {
		return fmt.Errorf("%s: parameter %s given twice", c.kind, name)
	}
	seen[name] = true
	v, err := strconv.ParseFloat(val, 64)
	if err != nil {
		return fmt.Errorf("%s: %s: value %q is not a number", c.kind, name, val)
	}
	if err := c.Set(name, v); err != nil {
		return err
	}
	return c.SetFit(name, free, lo, hi)
}

func checkRequired(c *Component, seen map[string]bool) error {
	info, _ := lookupKind(c.kind)
	for _, p := range info.params {
		if p.required && !seen[p.name] {
			return fmt.Errorf("%s: missing parameter %q", c.kind, p.name)
		}
	}
	return nil
}

// ParseTOML parses a model file: an array of tables [[component]], each
// with a kind and parameters. A parameter is a number (fixed) or an inline
// table {value = …, free = true, min = …, max = …} (free defaults to true
// in the table form when min or max is given, false otherwise). name is
// used in error messages, which also carry the line of the offending key.
//
//	[[component]]
//	kind = "ld"
//	diameter = {value = 3.2, free = true, min = 1, max = 6}
//	u_ld = 0.3
func ParseTOML(src []byte, name string) (*Model, error) {
	var raw map[string]any
	md, err := toml.Decode(string(src), &raw)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, &SpecError{File: name, Line: pe.Position.Line, Err: errors.New(pe.Message)}
		}
		return nil, &SpecError{File: name, Err: err}
	}
	for _, k := range sortedKeys(raw) {
		if k != "component" {
			return nil, &SpecError{File: name, Line: KeyLine(src, []string{k}, -1),
				Err: fmt.Errorf("unknown key %q (a model file holds [[component]] tables)", k)}
		}
	}
	list, ok := raw["component"].([]map[string]any)
	if arr, isArr := raw["component"].([]any); isArr {
		// component = [{...}, {...}] written as an inline array.
		ok = true
		for _, e := range arr {
			tab, isTab := e.(map[string]any)
			if !isTab {
				ok = false
				break
			}
			list = append(list, tab)
		}
	}
	if !ok || len(list) == 0 {
		return nil, &SpecError{File: name, Line: KeyLine(src, []string{"component"}, -1),
			Err: errors.New("no [[component]] tables")}
	}
	m := &Model{}
	for i, tab := range list {
		line := func(key string) int {
			if key == "" {
				return KeyLine(src, []string{"component"}, i)
			}
			return KeyLine(src, []string{"component", key}, i)
		}
		fail := func(key string, err error) error {
			return &SpecError{File: name, Line: line(key), Item: i + 1, Err: err}
		}
		ks, ok := tab["kind"].(string)
		if !ok {
			return nil, fail("", errors.New(`missing kind = "…" (known: `+kindList()+")"))
		}
		c, err := newDefault(Kind(ks))
		if err != nil {
			return nil, fail("kind", err)
		}
		seen := map[string]bool{}
		for _, key := range fileOrder(md, i, tab) {
			if key == "kind" {
				continue
			}
			if c.index(key) < 0 {
				return nil, fail(key, c.unknown(key))
			}
			seen[key] = true
			if err := applyTOML(c, key, tab[key]); err != nil {
				return nil, fail(key, err)
			}
		}
		if err := checkRequired(c, seen); err != nil {
			return nil, fail("", err)
		}
		m.Components = append(m.Components, c)
	}
	if err := m.Validate(); err != nil {
		return nil, &SpecError{File: name, Err: err}
	}
	return m, nil
}

// fileOrder returns the keys of the i-th [[component]] table in the order
// they appear in the file, so that the first bad key is the one reported;
// keys the metadata does not list (inline arrays of tables) follow in
// sorted order.
func fileOrder(md toml.MetaData, i int, tab map[string]any) []string {
	var out []string
	seen := map[string]bool{}
	elem := -1
	for _, k := range md.Keys() {
		if len(k) == 1 && k[0] == "component" {
			elem++
			continue
		}
		if len(k) == 2 && k[0] == "component" && elem == i {
			if _, ok := tab[k[1]]; ok && !seen[k[1]] {
				out = append(out, k[1])
				seen[k[1]] = true
			}
		}
	}
	for _, k := range sortedKeys(tab) {
		if !seen[k] {
			out = append(out, k)
		}
	}
	return out
}

func sortedKeys[V any](m map[string]V) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

func number(v any) (float64, bool) {
	switch x := v.(type) {
	case int64:
		return float64(x), true
	case float64:
		return x, true
	}
	return 0, false
}

func applyTOML(c *Component, key string, v any) error {
	if x, ok := number(v); ok {
		return c.Set(key, x)
	}
	tab, ok := v.(map[string]any)
	if !ok {
		return fmt.Errorf("%s: %s must be a number or {value = …, free = …, min = …, max = …}", c.kind, key)
	}
	val, ok := number(tab["value"])
	if !ok {
		return fmt.Errorf("%s: %s: missing numeric value", c.kind, key)
	}
	lo, hi := math.Inf(-1), math.Inf(1)
	_, hasMin := tab["min"]
	_, hasMax := tab["max"]
	free := hasMin || hasMax
	for _, k := range sortedKeys(tab) {
		switch k {
		case "value":
		case "free":
			b, ok := tab[k].(bool)
			if !ok {
				return fmt.Errorf("%s: %s: free must be true or false", c.kind, key)
			}
			free = b
		case "min", "max":
			x, ok := number(tab[k])
			if !ok {
				return fmt.Errorf("%s: %s: %s must be a number", c.kind, key, k)
			}
			if k == "min" {
				lo = x
			} else {
				hi = x
			}
		default:
			return fmt.Errorf("%s: %s: unknown field %q (known: value, free, min, max)", c.kind, key, k)
		}
	}
	if err := c.Set(key, val); err != nil {
		return err
	}
	return c.SetFit(key, free, lo, hi)
}

// KeyLine returns the 1-based line of src where the TOML key is defined,
// or 0 when it is not found. key is a table path followed by a key name;
// for an array of tables, index selects the element (0-based) and −1
// means the first one that holds the key. A key naming a table itself
// returns the line of its header. The scan understands [table] and
// [[array]] headers and "key = value" lines (bare or quoted keys), which
// covers files written by hand; it is meant for error messages, since the
// TOML decoder does not report key positions.
func KeyLine(src []byte, key []string, index int) int {
	if len(key) == 0 {
		return 0
	}
	want := strings.Join(key, ".")
	wantTable := strings.Join(key[:len(key)-1], ".")
	last := key[len(key)-1]
	table := ""
	counts := map[string]int{}
	elem := -1
	lines := bytes.Split(src, []byte("\n"))
	for n, raw := range lines {
		line := strings.TrimSpace(string(raw))
		if line == "" || line[0] == '#' {
			continue
		}
		if strings.HasPrefix(line, "[[") {
			end := strings.Index(line, "]]")
			if end < 0 {
				continue
			}
			table = normKey(line[2:end])
			elem = counts[table]
			counts[table]++
			if table == want && (index < 0 || index == elem) {
				return n + 1
			}
			continue
		}
		if line[0] == '[' {
			end := strings.IndexByte(line, ']')
			if end < 0 {
				continue
			}
			table = normKey(line[1:end])
			elem = -1
			if table == want {
				return n + 1
			}
			continue
		}
		eq := strings.IndexByte(line, '=')
		if eq < 0 {
			continue
		}
		k := normKey(line[:eq])
		full := k
		if table != "" {
			full = table + "." + k
		}
		if full == want && (index < 0 || elem < 0) {
			return n + 1
		}
		if table == wantTable && k == last && (index < 0 || index == elem) {
			return n + 1
		}
	}
	return 0
}

// normKey removes spaces and quotes from a (possibly dotted) TOML key.
func normKey(s string) string {
	parts := strings.Split(s, ".")
	for i, p := range parts {
		p = strings.TrimSpace(p)
		if len(p) >= 2 && (p[0] == '"' || p[0] == '\'') && p[len(p)-1] == p[0] {
			p = p[1 : len(p)-1]
		}
		parts[i] = p
	}
	return strings.Join(parts, ".")
}
