package recon

import (
	"fmt"
	"math"
	rf "reflect"
	"slices"
	"strconv"
	"strings"

	"vcz/dataset"
)

// A CubePlane is one plane of an image cube: the data its image is fitted to, and where it
// sits along the cube's third axis. The axis is generic: channel groups make planes along
// wavelength (SplitChannels); epochs would make planes along time the same way.
type CubePlane struct {
	Data *dataset.Data
	// Coord is the plane's coordinate along the axis: for channel groups the mean
	// wavelength (m) of its channels.
	Coord float64
	// Lo and Hi bound the coordinates of the plane's data (for channel groups the shortest
	// and longest wavelength, m).
	Lo, Hi float64
	// Label names the plane for people, e.g. "channels 1–4".
	Label string
}

// Channels says how the channels of a data set are grouped into the planes of a cube. The
// zero value is one plane holding every channel (the gray image).
type Channels struct {
	// All makes one plane per channel.
	All bool
	// Groups, when positive, makes that many planes of adjacent channels, as equal in
	// number as possible (the first Nch mod Groups planes hold one channel more).
	Groups int
	// List holds explicit groups: ranges of 1-based channel numbers (first, last), counted
	// in order of increasing wavelength over the distinct wavelengths of the data.
	List [][2]int
}

// ParseChannels reads the text of a channel grouping: "all" (one plane per channel), a
// number K (K groups of adjacent channels), or a comma-separated list of 1-based channel
// numbers and ranges, each one group, e.g. "1-4,5-8,9-12" (channels in order of increasing
// wavelength). The empty text and "1" are one plane. The error says what is wrong with the
// text; the caller names the option.
func ParseChannels(text string) (Channels, error) {
	text = strings.TrimSpace(text)
	switch {
	case text == "":
		return Channels{}, nil
	case text == "all":
		return Channels{All: true}, nil
	}
	if k, err := strconv.Atoi(text); err == nil {
		if k < 1 {
			return Channels{}, fmt.Errorf("want a positive number of groups, have %d", k)
		}
		if k == 1 {
			return Channels{}, nil
		}
		return Channels{Groups: k}, nil
	}
	var c Channels
	for _, f := range strings.Split(text, ",") {
		f = strings.TrimSpace(f)
		a, b, isRange := strings.Cut(f, "-")
		lo, err1 := strconv.Atoi(strings.TrimSpace(a))
		hi, err2 := lo, error(nil)
		if isRange {
			hi, err2 = strconv.Atoi(strings.TrimSpace(b))
		}
		if err1 != nil || err2 != nil || lo < 1 || hi < lo {
			return Channels{}, fmt.Errorf("%q is not a channel number or range such as 5-8 (want all, a number of groups, or a list such as 1-4,5-8)", f)
		}
		if n := len(c.List); n > 0 && lo <= c.List[n-1][1] {
			return Channels{}, fmt.Errorf("group %q overlaps or precedes the group before it; give groups in increasing order", f)
		}
		c.List = append(c.List, [2]int{lo, hi})
	}
	return c, nil
}

// String returns the text ParseChannels reads back to c ("" for one plane).
func (c Channels) String() string {
	switch {
	case c.All:
		return "all"
	case c.Groups > 1:
		return strconv.Itoa(c.Groups)
	case len(c.List) > 0:
		var b strings.Builder
		for i, g := range c.List {
			if i > 0 {
				b.WriteByte(',')
			}
			b.WriteString(strconv.Itoa(g[0]))
			if g[1] != g[0] {
				b.WriteString("-" + strconv.Itoa(g[1]))
			}
		}
		return b.String()
	}
	return ""
}

// Single reports whether c makes one plane of every channel (the gray image).
func (c Channels) Single() bool { return !c.All && c.Groups <= 1 && len(c.List) == 0 }

// channelTol is the relative difference below which two wavelengths are the same channel:
// files of one instrument repeat the same OI_WAVELENGTH values, which may differ in the last
// digits after a conversion (common practice, no source).
const channelTol = 1e-7

// Wavelengths returns the distinct wavelengths (m) of the points of d, sorted increasing;
// wavelengths within a relative 1e-7 of each other count as one channel.
func Wavelengths(d *dataset.Data) []float64 {
	var all []float64
	all = append(all, d.Vis2.Lambda...)
	all = append(all, d.T3.Lambda...)
	all = append(all, d.Vis.Lambda...)
	slices.Sort(all)
	var out []float64
	for _, l := range all {
		if n := len(out); n == 0 || l-out[n-1] > channelTol*l {
			out = append(out, l)
		}
	}
	return out
}

// SplitChannels divides d into the planes of c: each plane holds the points whose
// wavelength is one of its channels (Wavelengths numbers them 1, 2, ... in increasing
// order). Every point belongs to one plane, except with an explicit list that leaves
// channels out. The error says what is wrong (more groups than channels, a channel number
// beyond the last, a plane without data).
func SplitChannels(d *dataset.Data, c Channels) ([]CubePlane, error) {
	waves := Wavelengths(d)
	nch := len(waves)
	if nch == 0 {
		return nil, fmt.Errorf("the data have no channels")
	}
	var groups [][2]int // 0-based first and last channel of each plane
	switch {
	case c.All:
		for i := range nch {
			groups = append(groups, [2]int{i, i})
		}
	case c.Groups > 1:
		if c.Groups > nch {
			return nil, fmt.Errorf("%d channel groups asked for, but the data have %d channels", c.Groups, nch)
		}
		first := 0
		for k := range c.Groups {
			size := nch / c.Groups
			if k < nch%c.Groups {
				size++
			}
			groups = append(groups, [2]int{first, first + size - 1})
			first += size
		}
	case len(c.List) > 0:
		for _, g := range c.List {
			if g[1] > nch {
				return nil, fmt.Errorf("channel %d asked for, but the data have %d channels", g[1], nch)
			}
			groups = append(groups, [2]int{g[0] - 1, g[1] - 1})
		}
	default:
		groups = [][2]int{{0, nch - 1}}
	}
	planes := make([]CubePlane, len(groups))
	for k, g := range groups {
		lo, hi := waves[g[0]], waves[g[1]]
		// Channel edges halfway to the neighbouring channels, so that a wavelength within
		// channelTol of a listed one falls in its channel.
		a, b := lo*(1-channelTol), hi*(1+channelTol)
		sub := subsetData(d, func(l float64) bool { return l >= a && l <= b })
		if sub.Len(dataset.AllTypes) == 0 {
			return nil, fmt.Errorf("channel group %d (channels %d–%d) has no usable data", k+1, g[0]+1, g[1]+1)
		}
		mean := 0.0
		for _, w := range waves[g[0] : g[1]+1] {
			mean += w
		}
		mean /= float64(g[1] - g[0] + 1)
		label := fmt.Sprintf("channel %d", g[0]+1)
		if g[1] > g[0] {
			label = fmt.Sprintf("channels %d–%d", g[0]+1, g[1]+1)
		}
		planes[k] = CubePlane{Data: sub, Coord: mean, Lo: lo, Hi: hi, Label: label}
	}
	return planes, nil
}

// subsetData returns the points of d whose wavelength keep accepts, as a new Data with the
// files, targets and instruments of d and the counts of the kept points. Every slice of
// the point structs that has one entry per point is filtered, so fields added to them later
// are carried along.
func subsetData(d *dataset.Data, keep func(lambda float64) bool) *dataset.Data {
	s := &dataset.Data{Files: d.Files, Targets: d.Targets, Instruments: d.Instruments}
	filterPoints(&s.Vis2, &d.Vis2, d.Vis2.Lambda, keep)
	filterPoints(&s.T3, &d.T3, d.T3.Lambda, keep)
	filterPoints(&s.Vis, &d.Vis, d.Vis.Lambda, keep)
	s.Vis2Count = dataset.Counts{Valid: s.Vis2.Len()}
	s.T3Count = dataset.Counts{Valid: s.T3.Len()}
	s.VisCount = dataset.Counts{Valid: s.Vis.Len()}
	return s
}

// filterPoints copies into dst (a pointer to a points struct) the entries i of every slice
// field of src (the same type) of length len(lambda) for which keep(lambda[i]).
func filterPoints(dst, src any, lambda []float64, keep func(float64) bool) {
	var idx []int
	for i, l := range lambda {
		if keep(l) {
			idx = append(idx, i)
		}
	}
	dv, sv := rf.ValueOf(dst).Elem(), rf.ValueOf(src).Elem()
	for f := range sv.NumField() {
		col := sv.Field(f)
		if col.Kind() != rf.Slice || col.Len() != len(lambda) {
			continue
		}
		out := rf.MakeSlice(col.Type(), len(idx), len(idx))
		for j, i := range idx {
			out.Index(j).Set(col.Index(i))
		}
		dv.Field(f).Set(out)
	}
}

// planeMoments returns the flux, the photocentre (x, y, rad, east and north as in
// CONVENTIONS.md) and the second-moment size of image img (n × n of the given pixel, rad):
// the root mean square radius √(Σ I·((x−x̄)² + (y−ȳ)²)/Σ I). NaN without flux.
func planeMoments(img []float64, n int, pixel float64) (flux, cx, cy, rms float64) {
	var sx, sy float64
	for iy := range n {
		y := float64(iy-n/2) * pixel
		for ix := range n {
			v := img[iy*n+ix]
			flux += v
			sx += v * -float64(ix-n/2) * pixel
			sy += v * y
		}
	}
	if !(flux > 0) {
		return flux, math.NaN(), math.NaN(), math.NaN()
	}
	cx, cy = sx/flux, sy/flux
	var m2 float64
	for iy := range n {
		dy := float64(iy-n/2)*pixel - cy
		for ix := range n {
			dx := -float64(ix-n/2)*pixel - cx
			m2 += img[iy*n+ix] * (dx*dx + dy*dy)
		}
	}
	return flux, cx, cy, math.Sqrt(m2 / flux)
}
