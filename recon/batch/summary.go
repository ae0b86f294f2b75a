package batch

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"

	"vcz/dataset"
	"vcz/io/safefile"
)

// Epoch states recorded in Row.Status.
const (
	StateDone   = "done"
	StateFailed = "failed"
)

// Row is one epoch of a batch summary.
type Row struct {
	Index   int     `json:"index"` // 0-based position in the full list of epochs
	Epoch   string  `json:"epoch"`
	MJDMin  float64 `json:"mjd_min"` // 0 when unknown (the data could not be read)
	MJDMax  float64 `json:"mjd_max"`
	Status  string  `json:"status"` // StateDone or StateFailed
	Error   string  `json:"error,omitempty"`
	Skipped bool    `json:"skipped,omitempty"` // found complete and not redone
	// Points and Chi2r are per data type, keyed by the type's word (dataset.DataType.String:
	// "vis2", "t3phi", …). In JSON they are "chi2r_by_type", {"vis2": {"n": …, "chi2r": …}},
	// the shape of the other commands' JSON, and Chi2rTotal is "chi2r".
	Points     map[string]int     `json:"-"`
	Chi2r      map[string]float64 `json:"-"`
	Chi2rTotal float64            `json:"chi2r"`
	Weight     float64            `json:"weight"`
	// Iterations counts every iteration of the epoch's reconstruction: for a gray image
	// all its runs (recon.Result.TotalIter: the automatic weight search, each start and the
	// final run, so often several times -iter), for a cube all the runs of its gray image
	// and its planes (recon.CubeResult.TotalIter), for a star and its environment those of
	// its fit (recon.StarEnvResult.Iter).
	Iterations int     `json:"iterations"`
	Seconds    float64 `json:"seconds"`
	FITS       string  `json:"fits,omitempty"`
	PNG        string  `json:"png,omitempty"`
	// Warnings is the quality verdict of the epoch's image (recon.Result.Warnings);
	// WriteJSON writes an empty list for none.
	Warnings []string `json:"warnings"`
}

// typeFitJSON is the JSON of one data type of a row: its points and, when the epoch was
// imaged, its χ²ᵣ.
type typeFitJSON struct {
	N     int      `json:"n"`
	Chi2r *float64 `json:"chi2r,omitempty"`
}

// rowFields is Row without its JSON methods.
type rowFields Row

// rowJSON is the JSON form of a Row.
type rowJSON struct {
	rowFields
	ByType map[string]typeFitJSON `json:"chi2r_by_type"`
}

// MarshalJSON writes the row with its points and χ²ᵣ per type as "chi2r_by_type".
func (r Row) MarshalJSON() ([]byte, error) {
	j := rowJSON{rowFields: rowFields(r), ByType: map[string]typeFitJSON{}}
	for t, n := range r.Points {
		f := typeFitJSON{N: n}
		if c, ok := r.Chi2r[t]; ok {
			f.Chi2r = &c
		}
		j.ByType[t] = f
	}
	for t, c := range r.Chi2r {
		if _, ok := j.ByType[t]; !ok {
			j.ByType[t] = typeFitJSON{Chi2r: &c}
		}
	}
	return json.Marshal(j)
}

// UnmarshalJSON reads a row written by MarshalJSON.
func (r *Row) UnmarshalJSON(b []byte) error {
	var j rowJSON
	if err := json.Unmarshal(b, &j); err != nil {
		return err
	}
	*r = Row(j.rowFields)
	r.Points, r.Chi2r = map[string]int{}, map[string]float64{}
	for t, f := range j.ByType {
		r.Points[t] = f.N
		if f.Chi2r != nil {
			r.Chi2r[t] = *f.Chi2r
		}
	}
	return nil
}

// Summary is a batch summary: the epochs handled, sorted by Index, and the shard that
// made it (1/1 for a whole batch or a collected one).
type Summary struct {
	Shard  string `json:"shard"`
	Epochs int    `json:"epochs_total"` // epochs of the whole batch
	Rows   []Row  `json:"rows"`
}

// Failed returns the number of failed rows.
func (s *Summary) Failed() int {
	n := 0
	for _, r := range s.Rows {
		if r.Status != StateDone {
			n++
		}
	}
	return n
}

// TypeOrder is the column order of the data types in the CSV table: their words in the order
// of recon's table of data types.
var TypeOrder = func() []string {
	var w []string
	for _, t := range dataset.DataTypes() {
		w = append(w, t.String())
	}
	return w
}()

// WriteJSON writes s to path atomically. Rows without warnings get an empty
// "warnings" list, never null.
func WriteJSON(path string, s *Summary) error {
	c := *s
	c.Rows = append([]Row(nil), s.Rows...)
	for i := range c.Rows {
		if c.Rows[i].Warnings == nil {
			c.Rows[i].Warnings = []string{}
		}
	}
	return writeJSONFile(path, &c)
}

// ReadJSON reads a summary written by WriteJSON.
func ReadJSON(path string) (*Summary, error) { return readJSONFile[Summary](path) }

// EncodeCSV writes the rows as a CSV table (RFC 4180) with a header line: epoch, MJD range,
// status, the points and χ²ᵣ of each data type (empty for a type the epoch lacks), total
// χ²ᵣ, weight, iterations, seconds, the number of warnings and the error.
func EncodeCSV(w io.Writer, s *Summary) error {
	cw := csv.NewWriter(w)
	head := []string{"epoch", "mjd_min", "mjd_max", "status"}
	for _, t := range TypeOrder {
		head = append(head, "n_"+t)
	}
	for _, t := range TypeOrder {
		head = append(head, "chi2r_"+t)
	}
	head = append(head, "chi2r", "weight", "iterations", "seconds", "warnings", "error")
	cw.Write(head)
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', 8, 64) }
	for _, r := range s.Rows {
		mjd := func(x float64) string {
			if x == 0 {
				return ""
			}
			return strconv.FormatFloat(x, 'f', 5, 64)
		}
		rec := []string{r.Epoch, mjd(r.MJDMin), mjd(r.MJDMax), r.Status}
		for _, t := range TypeOrder {
			if n, ok := r.Points[t]; ok {
				rec = append(rec, strconv.Itoa(n))
			} else {
				rec = append(rec, "")
			}
		}
		for _, t := range TypeOrder {
			if c, ok := r.Chi2r[t]; ok {
				rec = append(rec, g(c))
			} else {
				rec = append(rec, "")
			}
		}
		if r.Status == StateDone {
			rec = append(rec, g(r.Chi2rTotal), g(r.Weight), strconv.Itoa(r.Iterations))
		} else {
			rec = append(rec, "", "", "")
		}
		rec = append(rec, strconv.FormatFloat(r.Seconds, 'f', 2, 64), strconv.Itoa(len(r.Warnings)), r.Error)
		cw.Write(rec)
	}
	cw.Flush()
	return cw.Error()
}

// WriteCSV writes the CSV table of s to path atomically.
func WriteCSV(path string, s *Summary) error {
	return safefile.Write(path, func(w io.Writer) error { return EncodeCSV(w, s) })
}

// Collect merges shard summaries into the summary of the whole batch. Every summary must
// describe the same number of epochs; an epoch found in two summaries is an error, and so
// is one found in none (the error lists the missing epochs' indices).
func Collect(parts []*Summary) (*Summary, error) {
	if len(parts) == 0 {
		return nil, fmt.Errorf("batch: no summaries to collect")
	}
	out := &Summary{Shard: "1/1", Epochs: parts[0].Epochs}
	seen := map[int]string{}
	for i, p := range parts {
		if p.Epochs != out.Epochs {
			return nil, fmt.Errorf("summary %d (shard %s) describes %d epochs, the first %d", i+1, p.Shard, p.Epochs, out.Epochs)
		}
		for _, r := range p.Rows {
			if prev, dup := seen[r.Index]; dup {
				return nil, fmt.Errorf("epoch %q (index %d) is in shard %s and shard %s", r.Epoch, r.Index, prev, p.Shard)
			}
			seen[r.Index] = p.Shard
			out.Rows = append(out.Rows, r)
		}
	}
	sort.Slice(out.Rows, func(i, j int) bool { return out.Rows[i].Index < out.Rows[j].Index })
	var missing []string
	for i := 0; i < out.Epochs; i++ {
		if _, ok := seen[i]; !ok {
			missing = append(missing, strconv.Itoa(i+1))
		}
	}
	if len(missing) > 0 {
		return out, fmt.Errorf("%d of %d epochs are in no summary: number %s (counting from 1)%s",
			len(missing), out.Epochs, strings.Join(missing, ", "), missingShards(parts, seen, out.Epochs))
	}
	return out, nil
}

// missingShards names the shards whose summaries would hold the epochs missing from seen
// ("; run shard 2/4 first"), when every part is a shard of the same N; else "".
func missingShards(parts []*Summary, seen map[int]string, epochs int) string {
	n := 0
	for _, p := range parts {
		sh, err := ParseShard(p.Shard)
		if err != nil || n != 0 && sh.N != n {
			return ""
		}
		n = sh.N
	}
	if n <= 1 {
		return ""
	}
	var shards []string
	for k := 1; k <= n; k++ {
		for i := k - 1; i < epochs; i += n {
			if _, ok := seen[i]; !ok {
				shards = append(shards, Shard{K: k, N: n}.String())
				break
			}
		}
	}
	word := "shard"
	if len(shards) > 1 {
		word = "shards"
	}
	return fmt.Sprintf("; run %s %s first, or collect after they finish", word, strings.Join(shards, ", "))
}
