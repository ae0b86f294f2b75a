package batch

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"testing"
)

// The summary carries each epoch's warnings: a "warnings" list in JSON (an empty list,
// not null, for none) and their number in a "warnings" column of the CSV table, read
// back with encoding/csv (RFC 4180).
func TestSummaryWarnings(t *testing.T) {
	s := &Summary{Shard: "1/1", Epochs: 2, Rows: []Row{
		{Index: 0, Epoch: "a", Status: StateDone, Warnings: []string{"first, with a comma", "second"}},
		{Index: 1, Epoch: "b", Status: StateDone},
	}}
	path := filepath.Join(t.TempDir(), "summary.json")
	if err := WriteJSON(path, s); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var j struct {
		Rows []map[string]json.RawMessage `json:"rows"`
	}
	if err := json.Unmarshal(raw, &j); err != nil {
		t.Fatal(err)
	}
	if got := string(j.Rows[1]["warnings"]); got != "[]" {
		t.Errorf("row without warnings: \"warnings\": %s, want []", got)
	}
	if s.Rows[1].Warnings != nil {
		t.Error("WriteJSON changed the caller's rows")
	}
	back, err := ReadJSON(path)
	if err != nil || !reflect.DeepEqual(back.Rows[0].Warnings, s.Rows[0].Warnings) {
		t.Fatalf("read back %+v, %v", back, err)
	}
	var buf bytes.Buffer
	if err := EncodeCSV(&buf, s); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := -1
	for i, h := range recs[0] {
		if h == "warnings" {
			col = i
		}
	}
	if col < 0 || recs[1][col] != "2" || recs[2][col] != "0" {
		t.Fatalf("warnings column %d in %q", col, recs)
	}
}
