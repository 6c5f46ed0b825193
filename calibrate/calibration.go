package calibrate

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"undercurrent/ingest"
)

// Version is the calibration file format version this package writes and
// the only one Load accepts. It grows by one when a field changes meaning
// or is removed; an added optional field (sensor, offset_undetermined,
// logs_taken) does not change it, and files written without that field
// read as before.
const Version = 1

// Method names recorded in a calibration file.
const (
	MethodEllipsoid = "ellipsoid"
	MethodFlip      = "flip"
	MethodZero      = "zero"
)

// Calibration is a sensor correction, corrected = Matrix (raw - Offset), in
// the sensor frame, with a record of how it was made. It is saved as JSON.
type Calibration struct {
	Version int       `json:"version"`
	Method  string    `json:"method"`
	Created time.Time `json:"created"`
	Inputs  []Input   `json:"inputs"`
	// Offset is the hard-iron (or flip / zero-field) offset, nT.
	Offset [3]float64 `json:"offset_nt"`
	// OffsetSigma is its standard error where the method gives one, nT.
	OffsetSigma *[3]float64 `json:"offset_sigma_nt,omitempty"`
	// Undetermined lists the axes ("x", "y", "z") whose offset the method
	// could not determine (a flip pair turned about that axis): their offset
	// is left at 0 and their OffsetSigma, 0, means nothing. Empty when every
	// axis is determined.
	Undetermined []string `json:"offset_undetermined,omitempty"`
	// Matrix is the correction matrix (identity for offset-only methods).
	Matrix [3][3]float64 `json:"matrix"`
	// Reference is the field magnitude the matrix maps to, nT (ellipsoid).
	Reference float64 `json:"reference_nt,omitempty"`
	// Before and After are the spreads of |B| over the calibration log,
	// raw and corrected (ellipsoid).
	Before *Spread `json:"before,omitempty"`
	After  *Spread `json:"after,omitempty"`
	// Coverage is the orientation coverage of the spin log (ellipsoid).
	Coverage *Coverage `json:"coverage,omitempty"`
	// Sensor names the sensor the calibration was made for, when the
	// calibration log named it (see SensorName); Check compares it with
	// the sensor of the log a calibration is applied to.
	Sensor string `json:"sensor,omitempty"`
	// LogsTaken is the time span of the calibration logs' readings (the
	// spin, the flip pair or the zero-field log), when they have absolute
	// times: what the calibration describes is the sensor as it was then,
	// not when the file was written (Created). Check compares it with the
	// survey's times. Nil for logs without times, and in files written
	// before it was recorded.
	LogsTaken *TimeSpan `json:"logs_taken,omitempty"`
	Notes     []string  `json:"notes,omitempty"`
}

// TimeSpan is the span of a log's readings: its first and last reading's
// time, UTC.
type TimeSpan struct {
	First time.Time `json:"first"`
	Last  time.Time `json:"last"`
}

// SpanOf returns the span of the finite times in the logs' time columns
// (seconds, absolute times as Unix seconds, as ingest.Samples.Time holds
// them), to the second; nil when there is none, or when any is not an
// absolute time (1e8 s to 1e11 s, 1973 to 5138: a log timed from its own
// start has no date).
func SpanOf(times ...[]float64) *TimeSpan {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, ts := range times {
		for _, t := range ts {
			if math.IsNaN(t) || math.IsInf(t, 0) {
				continue
			}
			if t < 1e8 || t >= 1e11 {
				return nil
			}
			lo, hi = math.Min(lo, t), math.Max(hi, t)
		}
	}
	if lo > hi {
		return nil
	}
	return &TimeSpan{First: time.Unix(int64(math.Floor(lo)), 0).UTC(), Last: time.Unix(int64(math.Ceil(hi)), 0).UTC()}
}

// Dates shows the span by its days, "2024-01-10" or "2024-01-10 to
// 2024-01-11".
func (p *TimeSpan) Dates() string {
	a, b := p.First.Format("2006-01-02"), p.Last.Format("2006-01-02")
	if a == b {
		return a
	}
	return a + " to " + b
}

// logsWord names what a method's calibration logs were, for messages: "a
// spin", "a flip pair", "a zero-field log".
func (c *Calibration) logsWord() string {
	switch c.Method {
	case MethodEllipsoid:
		return "a spin"
	case MethodFlip:
		return "a flip pair"
	case MethodZero:
		return "a zero-field log"
	}
	return "its logs"
}

// Input records one file a calibration was made from.
type Input struct {
	Role    string `json:"role"` // "spin", "flip0", "flip180", "zero"
	File    string `json:"file"`
	SHA256  string `json:"sha256"`
	Samples int    `json:"samples"`
}

// FileInput returns an Input for path with its SHA-256 checksum.
func FileInput(role, path string, samples int) (Input, error) {
	f, err := os.Open(path)
	if err != nil {
		return Input{}, fmt.Errorf("calibrate: %w", err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return Input{}, fmt.Errorf("calibrate: %s: %w", path, err)
	}
	return Input{Role: role, File: path, SHA256: hex.EncodeToString(h.Sum(nil)), Samples: samples}, nil
}

// FromEllipsoid makes a Calibration from an ellipsoid fit; nil for a nil
// res.
func FromEllipsoid(res *EllipsoidResult, inputs ...Input) *Calibration {
	if res == nil {
		return nil
	}
	before, after := res.Before, res.After
	c := &Calibration{
		Version:   Version,
		Method:    MethodEllipsoid,
		Created:   time.Now().UTC().Truncate(time.Second),
		Inputs:    inputs,
		Offset:    res.Offset,
		Matrix:    res.Matrix,
		Reference: res.Radius,
		Before:    &before,
		After:     &after,
		Coverage:  res.Coverage,
	}
	c.Notes = append(c.Notes, "fit status: "+res.Status,
		"the matrix is the symmetric correction; it fixes the sensor frame only up to a rotation")
	return c
}

// FromOffset makes an offset-only Calibration (method MethodFlip or
// MethodZero) with an identity matrix; nil for a nil res.
func FromOffset(method string, res *OffsetResult, inputs ...Input) *Calibration {
	if res == nil {
		return nil
	}
	sigma := res.Sigma
	c := &Calibration{
		Version:     Version,
		Method:      method,
		Created:     time.Now().UTC().Truncate(time.Second),
		Inputs:      inputs,
		Offset:      res.Offset,
		OffsetSigma: &sigma,
		Matrix:      identity3(),
	}
	for k, ok := range res.Determined {
		if !ok {
			c.Undetermined = append(c.Undetermined, string("xyz"[k]))
			c.Notes = append(c.Notes, fmt.Sprintf("offset of the %c axis is not determined by this method and is left at zero", "xyz"[k]))
		}
	}
	c.Notes = append(c.Notes, res.Notes...)
	return c
}

// Correct applies the calibration to one reading.
func (c *Calibration) Correct(r [3]float64) [3]float64 {
	return matVec3(c.Matrix, [3]float64{r[0] - c.Offset[0], r[1] - c.Offset[1], r[2] - c.Offset[2]})
}

// ApplyColumns corrects three equal-length columns in place.
// It panics if their lengths differ (a programming mistake).
func (c *Calibration) ApplyColumns(bx, by, bz []float64) {
	if len(by) != len(bx) || len(bz) != len(bx) {
		panic("calibrate: ApplyColumns: columns of different lengths")
	}
	m := c.Matrix
	ox, oy, oz := c.Offset[0], c.Offset[1], c.Offset[2]
	by, bz = by[:len(bx)], bz[:len(bx)]
	for i := range bx {
		x, y, z := bx[i]-ox, by[i]-oy, bz[i]-oz
		bx[i] = m[0][0]*x + m[0][1]*y + m[0][2]*z
		by[i] = m[1][0]*x + m[1][1]*y + m[1][2]*z
		bz[i] = m[2][0]*x + m[2][1]*y + m[2][2]*z
	}
}

// Summary returns one line describing the calibration, for reports,
// ending with what it leaves open (Caveats).
func (c *Calibration) Summary() string {
	var b strings.Builder
	// The date is the logs' when they have times: the file's own date
	// (when calibrate ran) made a spin of 2024 applied to a survey of
	// 2026 read as a calibration newer than the survey (found in review).
	if c.LogsTaken != nil {
		fmt.Fprintf(&b, "%s calibration from %s of %s", c.Method, c.logsWord(), c.LogsTaken.Dates())
	} else {
		fmt.Fprintf(&b, "%s calibration of %s", c.Method, c.Created.Format("2006-01-02"))
	}
	if len(c.Inputs) > 0 {
		var names []string
		for _, in := range c.Inputs {
			sum := in.SHA256
			if len(sum) > 12 {
				sum = sum[:12]
			}
			names = append(names, fmt.Sprintf("%s (sha256 %s)", in.File, sum))
		}
		word := " from"
		if c.LogsTaken != nil {
			word = ", logged in"
		}
		fmt.Fprintf(&b, "%s %s", word, strings.Join(names, ", "))
	}
	fmt.Fprintf(&b, ": offset (%.1f, %.1f, %.1f) nT", c.Offset[0], c.Offset[1], c.Offset[2])
	if len(c.Undetermined) > 0 {
		// A flip pair leaves its turning axis's offset unmeasured, at 0.
		fmt.Fprintf(&b, " (%s not determined, left at 0)", strings.Join(c.Undetermined, ", "))
	}
	if c.Before != nil && c.After != nil {
		fmt.Fprintf(&b, ", |B| spread %.2f -> %.2f nT", c.Before.Std, c.After.Std)
	}
	if cv := c.Caveats(); len(cv) > 0 {
		fmt.Fprintf(&b, "; left open: %s", strings.Join(cv, "; "))
	}
	return b.String()
}

// NoReferenceNote begins the note the calibrate command records for a
// spin calibration made without a reference field magnitude, whose scale
// is then the sensor's own (ScaleFixed).
const NoReferenceNote = "no --reference:"

// ScaleFixed reports whether the calibration fixes the sensor's absolute
// scale: an ellipsoid calibration made with a reference field magnitude.
// Offset-only methods fit no scale; an ellipsoid fit without a reference
// maps the readings to the ellipsoid's own size, the sensor's own scale.
func (c *Calibration) ScaleFixed() bool {
	if c.Method != MethodEllipsoid {
		return false
	}
	for _, n := range c.Notes {
		if strings.HasPrefix(n, NoReferenceNote) {
			return false
		}
	}
	return true
}

// Caveats lists, in a few words each, what the calibration leaves open
// and so passes on to every result made with it: for an ellipsoid (spin)
// calibration the frame's rotation (a spin sees only |B|) and, without a
// reference, the absolute scale; for offset-only methods the soft iron and
// scale not fitted, the offsets' standard errors and the axes not
// determined.
func (c *Calibration) Caveats() []string {
	var out []string
	switch c.Method {
	case MethodEllipsoid:
		out = append(out, "the sensor frame is fixed only up to a rotation (a spin cannot see a turn of the sensor's axes, which turns fitted azimuths and offsets with it)")
		if !c.ScaleFixed() {
			out = append(out, "the absolute scale is the sensor's own (made without --reference), and currents scale with it")
		}
	default:
		out = append(out, "offsets only: no soft iron or scale fitted")
		if len(c.Undetermined) > 0 {
			out = append(out, fmt.Sprintf("the %s offset not determined (left at 0), which turns with a sensor whose attitude changes", strings.Join(c.Undetermined, ", ")))
		}
		if c.OffsetSigma != nil {
			var parts []string
			for k, v := range c.OffsetSigma {
				if !hasAxis(c.Undetermined, string("xyz"[k])) {
					parts = append(parts, fmt.Sprintf("%c ± %.3g", "xyz"[k], v))
				}
			}
			if len(parts) > 0 {
				out = append(out, "offsets "+strings.Join(parts, ", ")+" nT")
			}
		}
	}
	return out
}

func hasAxis(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}

// Validate checks that c is usable: a known version and a finite,
// invertible correction. A nil c is an error.
func (c *Calibration) Validate() error {
	if c == nil {
		return errors.New("no calibration (nil)")
	}
	if c.Version != Version {
		return fmt.Errorf("version %d is not supported (this build reads version %d)", c.Version, Version)
	}
	switch c.Method {
	case MethodEllipsoid, MethodFlip, MethodZero:
	default:
		return fmt.Errorf("method %q is not one of %q, %q, %q", c.Method, MethodEllipsoid, MethodFlip, MethodZero)
	}
	for k := 0; k < 3; k++ {
		if math.IsNaN(c.Offset[k]) || math.IsInf(c.Offset[k], 0) {
			return fmt.Errorf("offset_nt[%d] is %g", k, c.Offset[k])
		}
		if math.Abs(c.Offset[k]) > MaxOffsetNT {
			return fmt.Errorf("offset_nt[%d] is %g nT, beyond +-%g nT (1 mT, the range of a survey fluxgate): a corrupt value or an offset in another unit", k, c.Offset[k], float64(MaxOffsetNT))
		}
		for j := 0; j < 3; j++ {
			if v := c.Matrix[k][j]; math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("matrix[%d][%d] is %g", k, j, v)
			}
		}
	}
	if r := c.Reference; math.IsNaN(r) || math.IsInf(r, 0) || r < 0 {
		return fmt.Errorf("reference_nt is %g, want a positive field magnitude in nT (or no reference_nt)", r)
	}
	if p := c.LogsTaken; p != nil && (p.First.IsZero() || p.Last.IsZero() || p.Last.Before(p.First)) {
		return fmt.Errorf("logs_taken is %s to %s: want the first and last reading's times, the first not after the last", p.First.Format(time.RFC3339), p.Last.Format(time.RFC3339))
	}
	if c.OffsetSigma != nil {
		for k, v := range c.OffsetSigma {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				return fmt.Errorf("offset_sigma_nt[%d] is %g, want a standard error of 0 nT or more", k, v)
			}
		}
	}
	m := c.Matrix
	det := m[0][0]*(m[1][1]*m[2][2]-m[1][2]*m[2][1]) - m[0][1]*(m[1][0]*m[2][2]-m[1][2]*m[2][0]) + m[0][2]*(m[1][0]*m[2][1]-m[1][1]*m[2][0])
	if math.Abs(det) < 1e-6 {
		return fmt.Errorf("matrix is singular (determinant %g)", det)
	}
	if det < 0 {
		// calibrate writes the identity (flip, zero) or a symmetric
		// positive-definite correction (ellipsoid): never a reflection.
		return fmt.Errorf("matrix has a negative determinant (%g): it mirrors an axis, which no calibration written by the calibrate command does (an edited file?)", det)
	}
	return nil
}

// MaxOffsetNT bounds a calibration's offsets, nT: 1 mT, the range of a
// survey fluxgate. An offset of 1e12 nT was accepted before.
const MaxOffsetNT = 1e6

// Save writes c to path as indented JSON, atomically. A nil c is an error,
// and nothing is written.
func (c *Calibration) Save(path string) error {
	if err := c.Validate(); err != nil {
		return fmt.Errorf("calibrate: %s: %w", path, err)
	}
	data, err := json.MarshalIndent(c, "", "  ")
	if err != nil {
		return fmt.Errorf("calibrate: %s: %w", path, err)
	}
	data = append(data, '\n')
	return ingest.WriteFileAtomic(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// Load reads a calibration file written by Save. It rejects unknown
// versions, unknown fields, missing fields (method, created, offset_nt,
// matrix), lists of the wrong length (offset_nt and offset_sigma_nt hold
// three numbers, matrix three rows of three) and unusable corrections
// with an error naming the file and the field (and line and column for
// JSON errors).
func Load(path string) (*Calibration, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("calibrate: %w", err)
	}
	// A UTF-8 byte order mark, as some editors save JSON, is not JSON:
	// before, it was refused as "invalid character 'ï'". CSV and
	// IAGA-2002 files are read with one too.
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	var probe struct {
		Version *int `json:"version"`
	}
	if err := json.Unmarshal(data, &probe); err != nil {
		return nil, jsonError(path, data, err)
	}
	if probe.Version == nil {
		return nil, fmt.Errorf("calibrate: %s: no \"version\" field: not a calibration file", path)
	}
	if *probe.Version != Version {
		return nil, fmt.Errorf("calibrate: %s: calibration file version %d is not supported (this build reads version %d)", path, *probe.Version, Version)
	}
	if err := checkShape(data); err != nil {
		return nil, fmt.Errorf("calibrate: %s: %w", path, err)
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	var c Calibration
	if err := dec.Decode(&c); err != nil {
		var pe *time.ParseError
		if errors.As(err, &pe) {
			return nil, timeError(path, data, pe)
		}
		return nil, jsonError(path, data, err)
	}
	if c.Created.IsZero() {
		return nil, fmt.Errorf("calibrate: %s: created is 0001-01-01T00:00:00Z, the zero time: want the date the calibration was made", path)
	}
	if err := c.Validate(); err != nil {
		return nil, fmt.Errorf("calibrate: %s: %w", path, err)
	}
	return &c, nil
}

// checkShape checks what decoding into fixed-size arrays would let pass
// silently: a missing or short offset_nt (its missing components would
// read as 0), extra elements (ignored), a matrix that is not 3x3 and a
// missing created date. A JSON syntax error is left to the decoder, which
// locates it.
func checkShape(data []byte) error {
	var raw map[string]json.RawMessage
	if err := json.Unmarshal(data, &raw); err != nil {
		return nil
	}
	present := func(k string) bool {
		v, ok := raw[k]
		return ok && !bytes.Equal(bytes.TrimSpace(v), []byte("null"))
	}
	for _, k := range []string{"method", "created", "offset_nt", "matrix"} {
		if !present(k) {
			return fmt.Errorf("no %q field: a calibration file has version, method, created, offset_nt and matrix", k)
		}
	}
	vector := func(k, what string) error {
		var v []json.RawMessage
		if err := json.Unmarshal(raw[k], &v); err != nil {
			return fmt.Errorf("%s is not a list of three numbers (%s)", k, what)
		}
		if len(v) != 3 {
			return fmt.Errorf("%s has %s, want 3 (%s)", k, values(len(v)), what)
		}
		return nil
	}
	if err := vector("offset_nt", "the x, y and z offsets in nT"); err != nil {
		return err
	}
	if present("offset_sigma_nt") {
		if err := vector("offset_sigma_nt", "the standard errors of the x, y and z offsets in nT"); err != nil {
			return err
		}
	}
	var rows []json.RawMessage
	if err := json.Unmarshal(raw["matrix"], &rows); err != nil {
		return fmt.Errorf("matrix is not a list of rows: want 3x3, three rows of three numbers")
	}
	if len(rows) != 3 {
		return fmt.Errorf("matrix has %d rows, want 3x3 (three rows of three numbers)", len(rows))
	}
	for i, r := range rows {
		var v []json.RawMessage
		if err := json.Unmarshal(r, &v); err != nil {
			return fmt.Errorf("matrix row %d is not a list of numbers: want 3x3 (three rows of three numbers)", i+1)
		}
		if len(v) != 3 {
			return fmt.Errorf("matrix row %d has %s, want 3x3 (three rows of three numbers)", i+1, values(len(v)))
		}
	}
	return nil
}

// values says "1 value", "2 values".
func values(n int) string {
	if n == 1 {
		return "1 value"
	}
	return fmt.Sprintf("%d values", n)
}

// jsonError adds the file name and, when the error carries an offset, the
// line and column.
func jsonError(path string, data []byte, err error) error {
	var off int64 = -1
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &se):
		off = se.Offset
	case errors.As(err, &te):
		off = te.Offset
	}
	if off < 0 {
		return fmt.Errorf("calibrate: %s: %w", path, err)
	}
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	line := 1 + bytes.Count(data[:off], []byte("\n"))
	col := int(off) - bytes.LastIndexByte(data[:off], '\n')
	if se != nil && off == int64(len(data)) && strings.HasPrefix(strings.TrimSpace(string(data)), "{") {
		// The JSON ends inside its object: a file cut short, not some
		// other kind of file.
		return fmt.Errorf("calibrate: %s:%d:%d: the file ends here, inside its JSON: a calibration file cut short (an interrupted copy?): copy it again whole, or run calibrate again", path, line, col)
	}
	if se != nil {
		// The decoder's own words ("invalid character 'a' in literal
		// null") do not say what the file should be.
		return fmt.Errorf("calibrate: %s:%d:%d: not a calibration file: a calibration file is JSON written by the calibrate command (%w)", path, line, col, err)
	}
	if te != nil {
		return fmt.Errorf("calibrate: %s:%d:%d: field %s: want %s, found a JSON %s", path, line, col, te.Field, jsonKind(te.Type.Kind().String()), te.Value)
	}
	return fmt.Errorf("calibrate: %s:%d:%d: %w", path, line, col, err)
}

// jsonKind names a Go kind as a JSON value.
func jsonKind(k string) string {
	switch {
	case strings.HasPrefix(k, "float"), strings.HasPrefix(k, "int"), strings.HasPrefix(k, "uint"):
		return "a number"
	case k == "string":
		return "a string"
	case k == "bool":
		return "true or false"
	case k == "slice", k == "array":
		return "a list"
	case k == "struct", k == "map":
		return "an object"
	}
	return k
}

// timeError words a date the decoder could not read (created,
// logs_taken.first or .last), at its line and column when its text is
// found. Before, Go's layout text was shown: parsing time "not a date" as
// "2006-01-02T15:04:05Z07:00": cannot parse ...
func timeError(path string, data []byte, pe *time.ParseError) error {
	where := path
	if i := bytes.Index(data, []byte(strconv.Quote(pe.Value))); i >= 0 {
		line := 1 + bytes.Count(data[:i], []byte("\n"))
		col := i - bytes.LastIndexByte(data[:i], '\n')
		where = fmt.Sprintf("%s:%d:%d", path, line, col)
	}
	return fmt.Errorf("calibrate: %s: %q is not a date and time: created and logs_taken's first and last are RFC 3339 times such as 2026-04-21T08:10:00Z", where, pe.Value)
}
