package regularizers

import (
	"fmt"
	"strconv"
	"strings"
)

// Options are the settings of a registered regularizer that come from the user rather than
// from the grid.
type Options struct {
	// Prior is the prior image of the regularizers that use one (Kind.UsesPrior), NX*NY
	// positive pixels; nil means FlatPrior(NX, NY, 1).
	Prior []float64
	// TVEps is TV.Eps, the gradient size below which tv acts quadratically, relative to the mean pixel value; 0 means
	// DefaultTVEps.
	TVEps float64
}

// A Kind is a regularizer a user can name: its name, one line for help texts and its
// constructor on an NX × NY grid.
type Kind struct {
	Name  string
	About string
	// UsesPrior says that New reads Options.Prior.
	UsesPrior bool
	New       func(nx, ny int, o Options) (Regularizer, error)
}

// kinds is the registry, in the order help texts and comparisons list it. A new regularizer
// is its own file plus one row here.
var kinds = []Kind{
	{Name: "mem", About: "maximum entropy relative to the prior (Skilling & Bryan 1984)", UsesPrior: true,
		New: func(nx, ny int, o Options) (Regularizer, error) {
			p, err := priorOrFlat(nx, ny, o.Prior)
			return &MaxEnt{NX: nx, NY: ny, Prior: p}, err
		}},
	{Name: "tv", About: "edge-preserving total variation (Rudin, Osher & Fatemi 1992)",
		New: func(nx, ny int, o Options) (Regularizer, error) { return &TV{NX: nx, NY: ny, Eps: o.TVEps}, nil }},
	{Name: "smooth", About: "quadratic smoothness (Tikhonov)",
		New: func(nx, ny int, o Options) (Regularizer, error) { return &Smooth{NX: nx, NY: ny}, nil }},
	{Name: "compact", About: "quadratic penalty growing with distance from the centre",
		New: func(nx, ny int, o Options) (Regularizer, error) { return &Compact{NX: nx, NY: ny}, nil }},
	{Name: "priordist", About: "quadratic distance to the prior image", UsesPrior: true,
		New: func(nx, ny int, o Options) (Regularizer, error) {
			p, err := priorOrFlat(nx, ny, o.Prior)
			return &PriorDistance{NX: nx, NY: ny, Prior: p}, err
		}},
}

// priorOrFlat returns p, or the flat prior of total flux 1 when p is nil.
func priorOrFlat(nx, ny int, p []float64) ([]float64, error) {
	if p != nil {
		return p, nil
	}
	return FlatPrior(nx, ny, 1)
}

// Kinds returns the registered regularizers in their fixed order.
func Kinds() []Kind { return append([]Kind(nil), kinds...) }

// Lookup returns the registered regularizer of that name (lower case).
func Lookup(name string) (Kind, bool) {
	for _, k := range kinds {
		if k.Name == name {
			return k, true
		}
	}
	return Kind{}, false
}

// NameList is the registered names joined by ", ", for help texts and messages.
func NameList() string {
	names := make([]string, len(kinds))
	for i, k := range kinds {
		names[i] = k.Name
	}
	return strings.Join(names, ", ")
}

// A NamedTerm is one regularizer of a list, named as in the registry, with its weight
// relative to the first term of the list.
type NamedTerm struct {
	Name string
	Rel  float64
}

// ParseList reads a list such as "tv" or "mem,compact:0.1": registered names, each
// optionally followed by ":WEIGHT", its weight relative to the first term. The first term's
// weight is 1 by definition (the overall weight is the regularization weight μ).
func ParseList(s string) ([]NamedTerm, error) {
	var terms []NamedTerm
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		name, w, hasW := strings.Cut(part, ":")
		name = strings.ToLower(strings.TrimSpace(name))
		if _, ok := Lookup(name); !ok {
			return nil, fmt.Errorf("unknown regularizer %q (use %s)", name, NameList())
		}
		t := NamedTerm{Name: name, Rel: 1}
		if hasW {
			x, err := strconv.ParseFloat(strings.TrimSpace(w), 64)
			if err != nil || !(x > 0) {
				return nil, fmt.Errorf("regularizer %s: relative weight %q must be a positive number", name, w)
			}
			if len(terms) == 0 && x != 1 {
				return nil, fmt.Errorf("regularizer %s: the first term's weight is 1 by definition; set the overall weight with -weight", name)
			}
			t.Rel = x
		}
		terms = append(terms, t)
	}
	if len(terms) == 0 {
		return nil, fmt.Errorf("no regularizer named")
	}
	return terms, nil
}

// FormatList is the list syntax of ParseList for terms, e.g. "mem,compact:0.1"; a weight of
// 1 is left out, and every weight is written so that ParseList reads back the same value.
func FormatList(terms []NamedTerm) string {
	parts := make([]string, len(terms))
	for i, t := range terms {
		parts[i] = t.Name
		if t.Rel != 1 {
			parts[i] += ":" + strconv.FormatFloat(t.Rel, 'g', -1, 64)
		}
	}
	return strings.Join(parts, ",")
}

// Label is the human-readable form of a list, e.g. "mem + 0.1·compact".
func Label(terms []NamedTerm) string {
	var parts []string
	for i, t := range terms {
		if i == 0 || t.Rel == 1 {
			parts = append(parts, t.Name)
		} else {
			parts = append(parts, fmt.Sprintf("%g·%s", t.Rel, t.Name))
		}
	}
	return strings.Join(parts, " + ")
}

// UsesPrior reports whether any term of the list reads Options.Prior.
func UsesPrior(terms []NamedTerm) bool {
	for _, t := range terms {
		if k, ok := Lookup(t.Name); ok && k.UsesPrior {
			return true
		}
	}
	return false
}

// Build makes the regularizer of a list on an nx × ny grid: the term itself when the list
// has one, else a Sum weighted by the relative weights. An unregistered name is an error.
func Build(terms []NamedTerm, nx, ny int, o Options) (Regularizer, error) {
	if len(terms) == 0 {
		return nil, fmt.Errorf("regularizers: no regularizer named")
	}
	sum := &Sum{}
	for _, t := range terms {
		k, ok := Lookup(t.Name)
		if !ok {
			return nil, fmt.Errorf("regularizers: unknown regularizer %q (use %s)", t.Name, NameList())
		}
		r, err := k.New(nx, ny, o)
		if err != nil {
			return nil, err
		}
		if len(terms) == 1 {
			return r, nil
		}
		sum.Terms = append(sum.Terms, Term{Weight: t.Rel, R: r})
	}
	return sum, nil
}
