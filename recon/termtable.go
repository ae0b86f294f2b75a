package recon

import "vcz/dataset"

// termRow gives one data type its term.
type termRow struct {
	Type dataset.DataType
	kind termKind // the data term (term_*.go)
}

// termTable gives each data type of the table of data types (package dataset) its term, row i
// for DataTypes()[i]: the order of the χ² report and of Weights. Adding a data type is one row
// of the table in package dataset, one row here and the term's file (DEVELOPERS.md, "How to
// add a data term").
var termTable = [...]termRow{
	{dataset.Vis2, vis2Kind{}},
	{dataset.T3Amp, t3AmpKind{}},
	{dataset.T3Phi, t3PhiKind{}},
	{dataset.VisAmp, visAmpKind{}},
	{dataset.VisPhi, visPhiKind{}},
	{dataset.VisDiff, visDiffKind{}},
}

// nTypes is the number of data types.
const nTypes = dataset.NTypes

// The term table has one row per data type: a type without a term, or a term without a type,
// does not compile.
var _ [nTypes]termRow = termTable

// typeList lists the single data types in the order of the table.
var typeList = dataset.DataTypes()
