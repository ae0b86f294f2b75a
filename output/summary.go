package output

import (
	"encoding/json"
	"math"
	"strconv"

	"vcz/dataset"
	"vcz/recon"
	"vcz/recon/fit"
)

// The JSON summaries that the commands print with -json. Angles are in milliarcseconds,
// baselines in metres, frequencies in Mλ, wavelengths in µm. Lists are empty, never null,
// when they hold nothing (an empty list is what a reader iterates over without a special
// case; common practice, no source).

// ImageSummary is the JSON summary of one reconstruction.
type ImageSummary struct {
	Outputs     Paths   `json:"outputs"`
	Target      string  `json:"target"`
	Grid        GridJ   `json:"grid"`
	Regularizer string  `json:"regularizer"`
	Weight      float64 `json:"weight"`
	WeightAuto  bool    `json:"weight_auto"`
	Chi2r       float64 `json:"chi2r"`
	Chi2rTarget float64 `json:"chi2r_expected"`
	// Chi2rFloor and Chi2rAim: the χ²ᵣ of the least-regularized images and the χ²ᵣ the
	// automatic weight aimed at (absent for a given weight).
	Chi2rFloor float64          `json:"chi2r_floor,omitempty"`
	Chi2rAim   float64          `json:"chi2r_aim,omitempty"`
	Chi2ByType map[string]Chi2J `json:"chi2r_by_type"`
	RegValue   float64          `json:"regularizer_value"`
	Iterations int              `json:"iterations"`
	TotalIter  int              `json:"total_iterations"`
	Status     string           `json:"status"`
	Converged  bool             `json:"converged"`
	Seconds    float64          `json:"seconds"`
	Path       []PathJ          `json:"weight_path,omitempty"`
	Notices    []string         `json:"notices"`
	// Warnings is the quality verdict (recon.Result.Warnings): an empty list when none.
	Warnings []string `json:"warnings"`
}

// Chi2J is the fit to one data type.
type Chi2J struct {
	N     int     `json:"n"`
	Chi2r float64 `json:"chi2r"`
}

// PathJ is one step of the weight path.
type PathJ struct {
	Weight float64 `json:"weight"`
	Chi2r  float64 `json:"chi2r"`
	Reg    float64 `json:"regularizer"`
	Iter   int     `json:"iterations"`
}

// NewImageSummary is the summary of the reconstruction run whose files are paths.
func NewImageSummary(run Run, paths Paths) ImageSummary {
	res := run.Result
	s := ImageSummary{
		Outputs: paths, Target: run.Target(), Regularizer: run.Regularizer(),
		Grid: GridJ{N: res.Grid.N, PixelMas: res.Grid.Pixel / recon.Mas, FOVMas: res.Grid.FOV / recon.Mas,
			SizeModel: res.Grid.SizeModel, SizeMas: res.Grid.Size / recon.Mas, Reasons: NonNil(res.Grid.Reasons)},
		Weight: res.Weight, WeightAuto: len(res.Path) > 0, Chi2r: res.Chi2r, Chi2rTarget: res.Chi2rTarget, Chi2rFloor: res.Chi2rFloor, Chi2rAim: res.Chi2rAim, RegValue: res.Reg,
		Chi2ByType: map[string]Chi2J{}, Iterations: res.Iter, TotalIter: res.TotalIter,
		Status: res.StopReason, Converged: res.Converged || res.Status.Converged(), Seconds: run.Seconds,
		Notices: NonNil(res.Notices), Warnings: NonNil(res.Warnings),
	}
	for _, t := range res.Chi2 {
		s.Chi2ByType[t.Type.String()] = Chi2J{N: t.N, Chi2r: t.Chi2r}
	}
	for _, p := range res.Path {
		s.Path = append(s.Path, PathJ{p.Weight, p.Chi2r, p.Reg, p.Iter})
	}
	return s
}

// InspectReport is the JSON form of the summary. Angles are in
// milliarcseconds, baselines in metres, frequencies in Mλ, wavelengths in µm.
type InspectReport struct {
	Files       []string            `json:"files"`
	Targets     []string            `json:"targets"`
	Instruments []InspectInstrument `json:"instruments"`
	Vis2        InspectCounts       `json:"vis2"`
	T3          InspectCounts       `json:"t3"`
	Vis         InspectCounts       `json:"vis"`
	Baseline    InspectRange        `json:"baseline_m"`
	Frequency   InspectRange        `json:"frequency_mlambda"`
	Wavelength  InspectRange        `json:"wavelength_um"`
	Resolution  float64             `json:"resolution_mas"`
	Largest     float64             `json:"largest_scale_mas"`
	Grid        GridJ               `json:"grid"` // the grid vcz image would choose
	MJD         InspectRange        `json:"mjd"`
	Nights      int                 `json:"nights"`
	// Breakdown is the data by night and instrument (Breakdown); empty when not computed.
	Breakdown []InspectGroup `json:"breakdown"`
	Notices   []string       `json:"notices"`
	Plots     []string       `json:"plots,omitempty"`
}

// InspectInstrument is one instrument of a data set.
type InspectInstrument struct {
	Name     string  `json:"name"`
	Channels int     `json:"channels"`
	MinUm    float64 `json:"wavelength_min_um"`
	MaxUm    float64 `json:"wavelength_max_um"`
}

// InspectCounts are the points of one data type.
type InspectCounts struct {
	Valid     int `json:"valid"`
	Flagged   int `json:"flagged"`
	NonFinite int `json:"nonfinite"`
}

// InspectRange is a closed interval.
type InspectRange struct {
	Min float64 `json:"min"`
	Max float64 `json:"max"`
}

// GridJ is a grid with its choice.
type GridJ struct {
	N         int      `json:"n"`
	PixelMas  float64  `json:"pixel_mas"`
	FOVMas    float64  `json:"fov_mas"`
	SizeModel string   `json:"size_model,omitempty"`
	SizeMas   float64  `json:"size_mas,omitempty"`
	Reasons   []string `json:"reasons"`
}

// NewInspectReport is the summary of a data set.
func NewInspectReport(d *dataset.Data) InspectReport {
	s := d.Summarize()
	r := InspectReport{
		Files:      s.Files,
		Targets:    NonNil(s.Targets),
		Vis2:       InspectCounts(s.Vis2),
		T3:         InspectCounts(s.T3),
		Vis:        InspectCounts(s.Vis),
		Baseline:   InspectRange{s.BaselineMin, s.BaselineMax},
		Frequency:  InspectRange{s.FreqMin / 1e6, s.FreqMax / 1e6},
		Wavelength: InspectRange{s.LambdaMin * 1e6, s.LambdaMax * 1e6},
		Resolution: s.Resolution / recon.Mas,
		Largest:    s.LargestScale / recon.Mas,
		MJD:        InspectRange{s.MJDMin, s.MJDMax},
		Nights:     s.Nights,
		Notices:    NonNil(d.Notices),
		Breakdown:  []InspectGroup{},
		Grid:       GridJ{Reasons: NonNil(nil)},
	}
	// The grid vcz image would choose with default options; none without usable data.
	if g, err := recon.ChooseGrid(d, recon.GridOptions{}); err == nil {
		r.Grid = GridJ{
			N: g.N, PixelMas: g.Pixel / recon.Mas, FOVMas: g.FOV / recon.Mas,
			SizeModel: g.SizeModel, SizeMas: g.Size / recon.Mas, Reasons: NonNil(g.Reasons),
		}
	}
	for _, in := range s.Instruments {
		r.Instruments = append(r.Instruments, InspectInstrument{in.Name, in.Channels, in.LambdaMin * 1e6, in.LambdaMax * 1e6})
	}
	if r.Instruments == nil {
		r.Instruments = []InspectInstrument{}
	}
	if math.IsInf(r.Largest, 0) {
		r.Largest = 0
	}
	return r
}

// NonNil returns s, or an empty list for nil (JSON [] rather than null).
func NonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

// FitSummary is the JSON form of a fit.
type FitSummary struct {
	Model        string      `json:"model"`
	Params       []FitParamJ `json:"params"`
	Correlations []FitCorrJ  `json:"correlations"`
	CorrMatrix   [][]JFloat  `json:"correlation_matrix"`
	Chi2         JFloat      `json:"chi2"`
	N            int         `json:"n"`
	DOF          int         `json:"dof"`
	Chi2r        JFloat      `json:"chi2r"`
	// Chi2rExpected is the expected value of Chi2r (fit.Result.Chi2rExpected).
	Chi2rExpected JFloat           `json:"chi2r_expected"`
	Chi2ByType    map[string]Chi2J `json:"chi2r_by_type"`
	Iterations    int              `json:"iterations"`
	Evals         int              `json:"evaluations"`
	Converged     bool             `json:"converged"`
	Status        string           `json:"status"`
	Starts        int              `json:"starts"`
	BestStart     int              `json:"best_start"` // 1-based, as the text counts starts (1 = the model's own values)
	Pairs         []FitPairJ       `json:"pairs"`
	Detections    []FitDetectJ     `json:"significance"`
	Grid          *FitGridJ        `json:"grid_search,omitempty"`
	Limits        *FitLimitsJ      `json:"detection_limits,omitempty"`
	Bootstrap     *FitBootJ        `json:"bootstrap,omitempty"`
	Plots         []string         `json:"plots"`
	Image         string           `json:"image,omitempty"`
	ModelFile     string           `json:"model_file,omitempty"`
	Seeded        int              `json:"seeded_starts"`
	Notices       []string         `json:"notices"`
	// Warnings is the quality verdict (fit.Result.Warnings): an empty list when none.
	Warnings []string `json:"warnings"`
}

// FitParamJ is one fitted parameter.
type FitParamJ struct {
	Name      string `json:"name"`
	Component int    `json:"component"`
	Kind      string `json:"kind"`
	Param     string `json:"param"`
	Value     JFloat `json:"value"`
	Error     JFloat `json:"error"`
	Unit      string `json:"unit"`
	AtBound   bool   `json:"at_bound"`
	// Undetermined is set when the data do not constrain the parameter
	// (fit.Param.Undetermined; its error is then null); absent otherwise.
	Undetermined bool `json:"undetermined,omitempty"`
	// BootError is the bootstrap error (vcz fit -bootstrap), absent without one.
	BootError *JFloat `json:"bootstrap_error,omitempty"`
}

// FitBootJ describes the bootstrap of a fit: replicates asked for and done, the unit
// resampled and the seed.
type FitBootJ struct {
	K    int    `json:"replicates"`
	Done int    `json:"done"`
	Unit string `json:"unit"`
	Seed uint64 `json:"seed"`
}

// AddBootstrap puts bootstrap errors beside the covariance errors: per parameter (in the
// order of Params) and per pair the spreads of the separation, position angle and flux
// ratio.
func (s *FitSummary) AddBootstrap(b FitBootJ, params, sep, pa, ratio []float64) {
	s.Bootstrap = &b
	for i := range s.Params {
		if i < len(params) {
			e := JFloat(params[i])
			s.Params[i].BootError = &e
		}
	}
	for i := range s.Pairs {
		if i < len(sep) {
			a, b, c := JFloat(sep[i]), JFloat(pa[i]), JFloat(ratio[i])
			s.Pairs[i].SepBoot, s.Pairs[i].PABoot, s.Pairs[i].RatioBoot = &a, &b, &c
		}
	}
}

// FitPairJ is one component relative to the primary (fit.Pair); components are counted
// from 1.
type FitPairJ struct {
	Primary   int    `json:"primary"`
	Component int    `json:"component"`
	Sep       JFloat `json:"separation_mas"`
	SepErr    JFloat `json:"separation_error_mas"`
	PA        JFloat `json:"pa_deg"`
	PAErr     JFloat `json:"pa_error_deg"`
	Ratio     JFloat `json:"flux_ratio"`
	RatioErr  JFloat `json:"flux_ratio_error"`
	DMag      JFloat `json:"dmag"`
	DMagErr   JFloat `json:"dmag_error"`
	AtBound   bool   `json:"at_bound"`
	// SepBoot, PABoot and RatioBoot are the bootstrap errors, absent without a bootstrap.
	SepBoot   *JFloat `json:"separation_bootstrap_error_mas,omitempty"`
	PABoot    *JFloat `json:"pa_bootstrap_error_deg,omitempty"`
	RatioBoot *JFloat `json:"flux_ratio_bootstrap_error,omitempty"`
}

// FitDetectJ is the significance of one component (fit.Detection); components are counted
// from 1.
type FitDetectJ struct {
	Component int    `json:"component"`
	Chi2Null  JFloat `json:"chi2_without"`
	Chi2Alt   JFloat `json:"chi2_with"`
	Scale     JFloat `json:"chi2r_scale"`
	Extra     int    `json:"extra_parameters"`
	DeltaChi2 JFloat `json:"delta_chi2"`
	PValue    JFloat `json:"p_value"`
	Sigma     JFloat `json:"sigma"`
	Searched  bool   `json:"position_searched"`
	// GlobalPValue and GlobalSigma are the field-wide figures of a searched position (null
	// without a calibration); PValue and Sigma are then the local ones. Trials is the
	// effective number of independent positions and SearchDraws the simulated searches.
	GlobalPValue JFloat `json:"global_p_value"`
	GlobalSigma  JFloat `json:"global_sigma"`
	Trials       JFloat `json:"effective_trials,omitempty"`
	SearchDraws  int    `json:"search_draws,omitempty"`
}

// FitLimitsJ gives the detection limits: the files written and the azimuthal mean and
// worst Δmag against separation at each significance (null where no ratio up to 1 is
// detected).
type FitLimitsJ struct {
	CSV      string              `json:"csv"`
	Plot     string              `json:"plot"`
	Sep      []float64           `json:"separation_mas"`
	MeanDMag map[string][]JFloat `json:"dmag_mean"`
	Worst    map[string][]JFloat `json:"dmag_worst"`
	Scale    JFloat              `json:"chi2r_scale"`
	// InjMeanDMag and InjWorst are the same by injection–recovery, absent unless computed.
	InjMeanDMag map[string][]JFloat `json:"dmag_mean_injection,omitempty"`
	InjWorst    map[string][]JFloat `json:"dmag_worst_injection,omitempty"`
}

// FitCorrJ is a correlation between two parameters.
type FitCorrJ struct {
	A string `json:"a"`
	B string `json:"b"`
	R JFloat `json:"r"`
}

// FitGridJ is the outcome of a companion search.
type FitGridJ struct {
	Ratio       float64 `json:"flux_ratio"`
	BestSep     float64 `json:"best_separation_mas"`
	BestPA      float64 `json:"best_pa_deg"`
	BestX       float64 `json:"best_east_mas"`
	BestY       float64 `json:"best_north_mas"`
	BestChi2    float64 `json:"best_chi2"`
	Chi2Primary float64 `json:"chi2_without_companion"`
	N           int     `json:"n"`
	// Comp is the component (1-based) the search added, fitted within the box BoxX × BoxY
	// (east and north, mas); the box is a limit of the search, not a bound of the model.
	Comp int        `json:"component"`
	BoxX [2]float64 `json:"box_east_mas"`
	BoxY [2]float64 `json:"box_north_mas"`
}

// JFloat is a float64 that is written as null in JSON when not finite.
type JFloat float64

// MarshalJSON writes f, or null when f is not finite.
func (f JFloat) MarshalJSON() ([]byte, error) {
	x := float64(f)
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(x)
}

// NewFitSummary is the summary of a fit from the given number of starts, with the pairs
// of res and no significance (FitDetections fills it).
func NewFitSummary(res *fit.Result, starts int) FitSummary {
	s := FitSummary{
		Model: res.Model.String(), Chi2: JFloat(res.Chi2), N: res.N, DOF: res.DOF, Chi2r: JFloat(res.Chi2r),
		Chi2ByType: map[string]Chi2J{}, Iterations: res.Iterations, Evals: res.Evals, Converged: res.Converged,
		Status: res.Reason, Starts: starts, BestStart: res.Start + 1, Seeded: res.Scanned, Plots: []string{},
		Notices: append([]string{}, res.Notices...), Correlations: []FitCorrJ{},
		Chi2rExpected: JFloat(res.Chi2rExpected), Warnings: append([]string{}, res.Warnings...),
	}
	for _, p := range res.Params {
		c := res.Model.Components[p.Ref.Comp]
		s.Params = append(s.Params, FitParamJ{Name: p.Ref.String(), Component: p.Ref.Comp + 1, Kind: string(c.Kind()),
			Param: p.Ref.Name, Value: JFloat(p.Value), Error: JFloat(p.Err), Unit: fit.ParamUnit(p.Ref.Name), AtBound: p.AtBound, Undetermined: p.Undetermined})
	}
	s.Pairs, s.Detections = []FitPairJ{}, []FitDetectJ{}
	for _, p := range res.Pairs {
		s.Pairs = append(s.Pairs, FitPairJ{Primary: p.Primary + 1, Component: p.Comp + 1, Sep: JFloat(p.Sep), SepErr: JFloat(p.SepErr),
			PA: JFloat(p.PA), PAErr: JFloat(p.PAErr), Ratio: JFloat(p.Ratio), RatioErr: JFloat(p.RatioErr),
			DMag: JFloat(p.DMag), DMagErr: JFloat(p.DMagErr), AtBound: p.AtBound})
	}
	for _, t := range res.PerType {
		s.Chi2ByType[t.Type.String()] = Chi2J{N: t.N, Chi2r: t.Chi2r}
	}
	if res.Corr != nil {
		k := len(res.Params)
		for i := 0; i < k; i++ {
			row := make([]JFloat, k)
			for j := 0; j < k; j++ {
				row[j] = JFloat(res.Corr.At(i, j))
				if j > i && math.Abs(res.Corr.At(i, j)) > 0.5 {
					s.Correlations = append(s.Correlations, FitCorrJ{A: res.Params[i].Ref.String(), B: res.Params[j].Ref.String(), R: JFloat(res.Corr.At(i, j))})
				}
			}
			s.CorrMatrix = append(s.CorrMatrix, row)
		}
	}
	return s
}

// FitDetections is the JSON form of the significances dets of components of the fit res; a
// component's position counts as searched when its x and y are free parameters of res
// (either free is enough).
func FitDetections(res *fit.Result, dets []*fit.Detection) []FitDetectJ {
	out := []FitDetectJ{}
	for _, det := range dets {
		searched := false
		for _, q := range res.Params {
			searched = searched || (q.Ref.Comp == det.Comp && (q.Ref.Name == "x" || q.Ref.Name == "y"))
		}
		out = append(out, FitDetectJ{Component: det.Comp + 1, Chi2Null: JFloat(det.Chi2Null), Chi2Alt: JFloat(det.Chi2Alt),
			Scale: JFloat(det.Scale), Extra: det.Extra, DeltaChi2: JFloat(det.DeltaChi2), PValue: JFloat(det.PValue),
			Sigma: JFloat(det.Sigma), Searched: searched, GlobalPValue: JFloat(det.GlobalPValue), GlobalSigma: JFloat(det.GlobalSigma),
			Trials: JFloat(det.Trials), SearchDraws: det.Draws})
	}
	return out
}

// NewFitLimits is the JSON form of the detection limits L written to the files csv and
// plot; the significances are named "3σ", "5σ".
func NewFitLimits(L *fit.Limits, csv, plot string) *FitLimitsJ {
	j := &FitLimitsJ{CSV: csv, Plot: plot, Sep: L.Sep, Scale: JFloat(L.Scale), MeanDMag: map[string][]JFloat{}, Worst: map[string][]JFloat{}}
	for k, s := range L.Sigmas {
		name := sigmaName(s)
		for i := range L.Sep {
			j.MeanDMag[name] = append(j.MeanDMag[name], JFloat(fit.DMag(L.Mean[k][i])))
			j.Worst[name] = append(j.Worst[name], JFloat(fit.DMag(L.Worst[k][i])))
		}
	}
	if in := L.Inj; in != nil {
		j.InjMeanDMag, j.InjWorst = map[string][]JFloat{}, map[string][]JFloat{}
		for k, s := range L.Sigmas {
			name := sigmaName(s)
			for i := range L.Sep {
				j.InjMeanDMag[name] = append(j.InjMeanDMag[name], JFloat(fit.DMag(in.Mean[k][i])))
				j.InjWorst[name] = append(j.InjWorst[name], JFloat(fit.DMag(in.Worst[k][i])))
			}
		}
	}
	return j
}

// sigmaName names a significance: "3σ".
func sigmaName(s float64) string { return strconv.FormatFloat(s, 'g', -1, 64) + "σ" }
