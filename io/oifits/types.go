package oifits

// File is the content of one OIFITS file (or of several merged by the
// caller), in the units the standard prescribes for the file: lengths in
// metres, angles in degrees, times in days (MJD) or seconds (INT_TIME).
// Tables keep the order in which they appear in the file.
type File struct {
	// Name is the base name of the file the data came from, used in error
	// messages; Decode takes it as an argument.
	Name string
	// Revision is the OIFITS revision: 1 (Pauls et al. 2005) or 2
	// (Duvert, Young & Hummel 2017). Decode sets it from the OI_REVN of
	// the OI_TARGET table (2 for v2 files, 1 for v1); Encode always writes 2.
	Revision int
	// Primary holds the primary-header keywords of the file.
	Primary Primary

	Targets     []Target
	Arrays      []Array
	Wavelengths []Wavelength
	Vis2        []Vis2
	T3          []T3
	Vis         []Vis
	Flux        []Flux

	// Skipped lists, one notice per HDU, the extensions Decode did not
	// read (for example OI_CORR, OI_INSPOL or any non-OI extension), e.g.
	// "HDU 7: OI_CORR skipped (not used by vcz)".
	Skipped []string
	// Warnings lists, one line each, what the standard does not allow
	// but reading can survive: a table appended twice with the same
	// EXTVER, or tables of one file with mixed revisions.
	Warnings []string
}

// Primary holds the primary-header keywords defined by OIFITS v2 (Duvert,
// Young & Hummel 2017, table 2). Empty strings are written as "UNKNOWN"
// where the standard makes a keyword mandatory (Encode documents which).
type Primary struct {
	Origin   string // ORIGIN: institution responsible for the file
	Date     string // DATE: creation date, "YYYY-MM-DD" or "YYYY-MM-DDThh:mm:ss"
	DateObs  string // DATE-OBS: start of the first observation, "YYYY-MM-DD..."
	Content  string // CONTENT: "OIFITS2" for v2 files
	Telescop string // TELESCOP: facility ("MULTI" when several)
	Instrume string // INSTRUME: instrument ("MULTI" when several)
	Observer string // OBSERVER
	Object   string // OBJECT: target ("MULTI" when several)
	InsMode  string // INSMODE: instrument mode
	Referenc string // REFERENC: bibliographic reference
	ProgID   string // PROG_ID: programme identifier
	ProcSoft string // PROCSOFT: software that produced the file
	ObsTech  string // OBSTECH: observing technique
	History  []string
	Comments []string
}

// Target is one row of OI_TARGET (Pauls et al. 2005, table 4; Duvert et al.
// 2017, table 5). Angles in degrees, velocities in m/s, proper motions in
// deg/yr, parallax in degrees.
type Target struct {
	ID                int     // TARGET_ID, >= 1
	Name              string  // TARGET
	RAEp0, DecEp0     float64 // RAEP0, DECEP0 (deg) at epoch Equinox
	Equinox           float64 // EQUINOX (years)
	RAErr, DecErr     float64 // RA_ERR, DEC_ERR (deg)
	SysVel            float64 // SYSVEL (m/s)
	VelTyp, VelDef    string  // VELTYP ("LSR", "HELIOCEN", ...), VELDEF ("OPTICAL", "RADIO")
	PMRA, PMDec       float64 // PMRA, PMDEC (deg/yr)
	PMRAErr, PMDecErr float64 // PMRA_ERR, PMDEC_ERR (deg/yr)
	Parallax, ParaErr float64 // PARALLAX, PARA_ERR (deg)
	SpecTyp           string  // SPECTYP
	Category          string  // CATEGORY (v2, optional): "CAL" or "SCI"; "" when absent
}

// Station is one row of OI_ARRAY.
type Station struct {
	TelName, StaName string     // TEL_NAME, STA_NAME
	Index            int        // STA_INDEX, referenced by the data tables
	Diameter         float64    // DIAMETER (m)
	XYZ              [3]float64 // STAXYZ (m), relative to the array centre
	FOV              float64    // FOV (arcsec, v2); 0 when absent (v1)
	FOVType          string     // FOVTYPE (v2): "FWHM" or "RADIUS"; "" when absent
}

// Array is one OI_ARRAY table.
type Array struct {
	HDU      int        // 1-based HDU number in the file (primary = 1); 0 for new tables
	Name     string     // ARRNAME
	Frame    string     // FRAME, e.g. "GEOCENTRIC"
	XYZ      [3]float64 // ARRAYX, ARRAYY, ARRAYZ (m)
	Stations []Station
}

// Wavelength is one OI_WAVELENGTH table: the spectral channels of one
// instrument set-up.
type Wavelength struct {
	HDU     int
	InsName string    // INSNAME
	EffWave []float64 // EFF_WAVE (m), one per channel
	EffBand []float64 // EFF_BAND (m), same length as EffWave
}

// Vis2 is one OI_VIS2 table. Every row has len(Data) == len(Err) ==
// len(Flag) == NWAVE of the linked OI_WAVELENGTH.
type Vis2 struct {
	HDU      int
	DateObs  string // DATE-OBS
	ArrName  string // ARRNAME ("" allowed in v1)
	InsName  string // INSNAME, links to a Wavelength
	CorrName string // CORRNAME (v2, optional)
	Rows     []Vis2Row
}

// Vis2Row is one row of OI_VIS2.
type Vis2Row struct {
	TargetID       int
	Time           float64   // TIME (s); 0 in v2 files (the standard keeps it for compatibility)
	MJD            float64   // MJD (days)
	IntTime        float64   // INT_TIME (s)
	Data, Err      []float64 // VIS2DATA, VIS2ERR
	UCoord, VCoord float64   // UCOORD, VCOORD (m): u towards east, v towards north
	StaIndex       [2]int    // STA_INDEX
	Flag           []bool    // FLAG: true = bad point
}

// T3 is one OI_T3 table.
type T3 struct {
	HDU      int
	DateObs  string
	ArrName  string
	InsName  string
	CorrName string
	Rows     []T3Row
}

// T3Row is one row of OI_T3. Phi and PhiErr are in degrees.
type T3Row struct {
	TargetID         int
	Time, MJD        float64
	IntTime          float64
	Amp, AmpErr      []float64 // T3AMP, T3AMPERR
	Phi, PhiErr      []float64 // T3PHI, T3PHIERR (deg)
	U1Coord, V1Coord float64   // U1COORD, V1COORD (m): baseline from station 1 to 2
	U2Coord, V2Coord float64   // U2COORD, V2COORD (m): baseline from station 2 to 3
	StaIndex         [3]int
	Flag             []bool
}

// Values of the v2 OI_VIS keywords AMPTYP and PHITYP (Duvert et al. 2017,
// sect. 4.5). An empty string means the file does not say, which is the
// case for every OIFITS v1 file; the reader does not guess.
const (
	AmpAbsolute       = "absolute"
	AmpDifferential   = "differential"
	AmpCorrelatedFlux = "correlated flux"
	PhiAbsolute       = "absolute"
	PhiDifferential   = "differential"
)

// Vis is one OI_VIS table.
type Vis struct {
	HDU      int
	DateObs  string
	ArrName  string
	InsName  string
	CorrName string
	AmpTyp   string // AMPTYP: AmpAbsolute, AmpDifferential, AmpCorrelatedFlux or "" (not stated)
	PhiTyp   string // PHITYP: PhiAbsolute, PhiDifferential or "" (not stated)
	AmpUnit  string // TUNIT of VISAMP: "" for visibilities, e.g. "Jy" for correlated flux
	Rows     []VisRow
}

// VisRow is one row of OI_VIS. Phi and PhiErr are in degrees.
type VisRow struct {
	TargetID       int
	Time, MJD      float64
	IntTime        float64
	Amp, AmpErr    []float64 // VISAMP, VISAMPERR
	Phi, PhiErr    []float64 // VISPHI, VISPHIERR (deg)
	UCoord, VCoord float64
	StaIndex       [2]int
	Flag           []bool
}

// Flux is one OI_FLUX table (v2 only; its own OI_REVN is 1).
type Flux struct {
	HDU      int
	DateObs  string
	InsName  string
	ArrName  string // optional
	CorrName string
	CalStat  string  // CALSTAT: "C" calibrated or "U" uncalibrated
	FOV      float64 // FOV (arcsec), optional; 0 when absent
	FOVType  string  // FOVTYPE, optional
	Unit     string  // TUNIT of FLUXDATA, e.g. "Jy" or "ADU"
	Rows     []FluxRow
}

// FluxRow is one row of OI_FLUX.
type FluxRow struct {
	TargetID  int
	MJD       float64
	IntTime   float64
	Data, Err []float64 // FLUXDATA, FLUXERR
	StaIndex  int       // STA_INDEX; 0 when the column is absent (calibrated spectra)
	Flag      []bool
}
