package ingest

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// Samples is a whole log in memory as plain columns (what calibrate,
// inverse and report use). Missing values (IAGA-2002 99999/88888, or cells
// accepted with WithAllowMissing) are NaN.
type Samples struct {
	Source     string    // file name, for messages
	Time       []float64 // seconds; absolute times as Unix seconds
	X, Y, Z    []float64 // metres, local east/north/up; nil when the log has no positions (base stations)
	Bx, By, Bz []float64 // nanotesla, east/north/up (or sensor frame when Frame == FrameSensor)
	Group      []string  // nil when absent
	Temp       []float64 // nil when absent
	Roll       []float64 // degrees, nil when absent
	Pitch, Yaw []float64 // degrees, nil when absent
	Qw, Qx     []float64 // attitude quaternion, nil when absent
	Qy, Qz     []float64 // attitude quaternion, nil when absent
	F          []float64 // scalar total field, nT (IAGA-2002 F); nil when absent
	Current    []float64 // a conductor's current, A (a current record, WithCurrentRecord); nil when absent
	// SigmaPlan and SigmaUp are each reading's own one-sigma position
	// uncertainty, m (ColSigmaPlan, ColSigmaUp: a receiver's accuracy
	// columns); nil when absent, NaN where a row leaves it empty.
	SigmaPlan, SigmaUp []float64
	Frame              Frame             // FrameENU (default) or FrameSensor
	Origin             *Geodetic         // non-nil when positions were converted from WGS84 lat/lon/height
	Meta               map[string]string // e.g. IAGA-2002 header fields ("station_name", "geodetic_latitude", ...)
	// NoTime: the log has no time column (read with WithTimeOptional);
	// Time is NaN.
	NoTime bool
	// Absent names the position columns (x, y, z) the log has no column
	// for although it has others: they hold 0 for every row (MetaAbsent).
	Absent []string
	// Columns are the input's column names as it gives them, and Unread
	// those of them that feed no column here (a traverse's name the
	// caller did not ask for, a GPS fix quality): for messages that name
	// the column a flag should have given. Set by Collect for readers of
	// this package (InputColumns).
	Columns, Unread []string
	// Warnings are the reader's warnings (see Warnings): problems with the
	// input that did not stop the reading. Callers should show them.
	Warnings []string
	// InFrame is the frame of the input's own columns as the reader took
	// it: FrameNED for a log turned from north, east, down to east,
	// north, up on reading (WithFrame(FrameNED), or the file's
	// "undercurrent.frame: ned" metadata). InFrameStated: the frame was
	// given or stated by the input, not assumed. Set by Collect for
	// readers of this package.
	InFrame       Frame
	InFrameStated bool
	// NaiveTime: the log's times were written without a UTC offset
	// (text, or Arrow timestamps without a time zone) and read as UTC,
	// with a warning: they may be local times. TimeSaidUTC: the time
	// column said its times are UTC (its unit, as in "Time (UTC)" or
	// --unit time=UTC). Neither is set for times that carry their
	// offset, seconds since 1970, or an IAGA-2002 file's times (UTC by
	// the format). Set by Collect for readers of this package (TimeBasis).
	NaiveTime, TimeSaidUTC bool
}

// Len returns the number of rows (0 for a nil s).
func (s *Samples) Len() int {
	if s == nil {
		return 0
	}
	return len(s.Time)
}

// column returns a pointer to the slice of canonical column c.
func (s *Samples) column(c int) *[]float64 {
	switch c {
	case cTime:
		return &s.Time
	case cX:
		return &s.X
	case cY:
		return &s.Y
	case cZ:
		return &s.Z
	case cBx:
		return &s.Bx
	case cBy:
		return &s.By
	case cBz:
		return &s.Bz
	case cTemp:
		return &s.Temp
	case cRoll:
		return &s.Roll
	case cPitch:
		return &s.Pitch
	case cYaw:
		return &s.Yaw
	case cQw:
		return &s.Qw
	case cQx:
		return &s.Qx
	case cQy:
		return &s.Qy
	case cQz:
		return &s.Qz
	case cF:
		return &s.F
	case cCurrent:
		return &s.Current
	case cSigmaPlan:
		return &s.SigmaPlan
	case cSigmaUp:
		return &s.SigmaUp
	}
	return nil
}

// ReadSamples reads a whole log into memory (see Open for the options).
func ReadSamples(path string, opts ...Option) (*Samples, error) {
	r, err := Open(path, opts...)
	if err != nil {
		return nil, err
	}
	defer r.Release()
	s, err := Collect(r)
	if err != nil {
		return nil, err
	}
	s.Source = path
	return s, nil
}

// Collect reads the rest of r into memory. It does not release r. A log
// with no data rows is an error. Rows with a missing (NaN) field value are
// counted in Meta["missing_rows"]. A nil r is an error.
func Collect(r Reader) (*Samples, error) {
	if r == nil {
		return nil, errors.New("ingest: Collect needs a reader, got nil")
	}
	sc := r.Schema()
	s := &Samples{Meta: map[string]string{}}
	if p := planOf(r); p != nil {
		s.Source = p.file
		s.InFrame, s.InFrameStated = p.inFrame, p.frameStated
		s.Columns, s.Unread, _ = InputColumns(r)
	}
	applySchemaMeta(s, sc)
	for r.Next() {
		rec := r.RecordBatch()
		for i, f := range rec.Schema().Fields() {
			c, ok := canonIndex(f.Name)
			if !ok || c >= nOut {
				continue
			}
			col := rec.Column(i)
			if c == cGroup {
				for j := 0; j < col.Len(); j++ {
					if col.IsNull(j) {
						// No group, as an empty cell; ValueStr would
						// give the text "(null)".
						s.Group = append(s.Group, "")
						continue
					}
					// Clone: Arrow strings alias the batch's buffer.
					s.Group = append(s.Group, strings.Clone(col.ValueStr(j)))
				}
				continue
			}
			fa, ok := col.(*array.Float64)
			if !ok {
				return nil, fmt.Errorf("ingest: %s: column %s has type %s, want float64", s.Source, f.Name, col.DataType())
			}
			p := s.column(c)
			*p = append(*p, fa.Float64Values()...)
		}
	}
	if err := r.Err(); err != nil {
		return nil, err
	}
	s.Warnings = Warnings(r)
	s.NaiveTime, s.TimeSaidUTC = TimeBasis(r)
	if s.Len() == 0 {
		return nil, fileErr(s.Source, nil, "no data rows")
	}
	missing := 0
	for i := range s.Time {
		if s.Bx == nil {
			// A current record (WithCurrentRecord): no field.
			if i < len(s.Current) && math.IsNaN(s.Current[i]) {
				missing++
			}
			continue
		}
		if math.IsNaN(s.Bx[i]) || math.IsNaN(s.By[i]) || math.IsNaN(s.Bz[i]) {
			missing++
		}
	}
	if missing > 0 {
		s.Meta["missing_rows"] = strconv.Itoa(missing)
	}
	return s, nil
}

func applySchemaMeta(s *Samples, sc *arrow.Schema) {
	md := sc.Metadata()
	for i, k := range md.Keys() {
		v := md.Values()[i]
		switch {
		case k == MetaFrame:
			if f, err := ParseFrame(v); err == nil {
				s.Frame = f
			}
		case k == MetaOrigin:
			var g Geodetic
			if _, err := fmt.Sscanf(v, "%g %g %g", &g.Lat, &g.Lon, &g.H); err == nil {
				s.Origin = &g
			}
		case k == MetaTime:
			s.NoTime = v == "absent"
		case k == MetaAbsent:
			s.Absent = strings.Fields(v)
		case strings.HasPrefix(k, MetaPrefix):
			s.Meta[strings.TrimPrefix(k, MetaPrefix)] = v
		}
	}
}

// schema returns the canonical schema of s, with its metadata.
func (s *Samples) schema() (*arrow.Schema, []int, error) {
	n := s.Len()
	name := s.Source
	if name == "" {
		name = "samples"
	}
	var out []int
	for c := 0; c < nOut; c++ {
		if c == cGroup {
			if s.Group != nil {
				if len(s.Group) != n {
					return nil, nil, fmt.Errorf("ingest: %s: column group has %d rows, time has %d", name, len(s.Group), n)
				}
				out = append(out, c)
			}
			continue
		}
		v := *s.column(c)
		if v == nil {
			if (c == cBx || c == cBy || c == cBz) && s.Current == nil {
				return nil, nil, fmt.Errorf("ingest: %s: column %s is missing", name, canonNames[c])
			}
			continue
		}
		if len(v) != n {
			return nil, nil, fmt.Errorf("ingest: %s: column %s has %d rows, time has %d", name, canonNames[c], len(v), n)
		}
		out = append(out, c)
	}
	fields := make([]arrow.Field, len(out))
	for i, c := range out {
		fields[i] = arrow.Field{Name: canonNames[c], Type: fieldType(c), Nullable: c == cGroup}
	}
	frame := FrameENU
	if s.Frame == FrameSensor {
		frame = FrameSensor
	}
	keys, vals := []string{MetaFrame}, []string{frame.String()}
	if s.NoTime {
		keys, vals = append(keys, MetaTime), append(vals, "absent")
	}
	if s.Origin != nil {
		keys, vals = append(keys, MetaOrigin), append(vals, formatOrigin(*s.Origin))
	}
	if len(s.Absent) > 0 {
		keys, vals = append(keys, MetaAbsent), append(vals, strings.Join(s.Absent, " "))
	}
	for _, k := range sortedKeys(s.Meta) {
		keys, vals = append(keys, MetaPrefix+k), append(vals, s.Meta[k])
	}
	md := arrow.NewMetadata(keys, vals)
	return arrow.NewSchema(fields, &md), out, nil
}

// samplesReader streams a Samples value as record batches.
type samplesReader struct {
	s    *Samples
	sc   *arrow.Schema
	out  []int
	mem  memory.Allocator
	rows int
	at   int
	cur  arrow.RecordBatch
	err  error
}

// NewSamplesReader streams s as canonical record batches of up to rows rows
// (0: 65536), allocated from mem (nil: the default allocator). A nil s is
// an error; so is one without the bx, by and bz columns, or with columns of
// other lengths than Time.
func NewSamplesReader(s *Samples, rows int, mem memory.Allocator) (Reader, error) {
	if s == nil {
		return nil, errors.New("ingest: NewSamplesReader needs samples, got nil")
	}
	sc, out, err := s.schema()
	if err != nil {
		return nil, err
	}
	if rows <= 0 {
		rows = 64 * 1024
	}
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	return &samplesReader{s: s, sc: sc, out: out, mem: mem, rows: rows}, nil
}

func (r *samplesReader) Schema() *arrow.Schema          { return r.sc }
func (r *samplesReader) RecordBatch() arrow.RecordBatch { return r.cur }
func (r *samplesReader) Err() error                     { return r.err }
func (r *samplesReader) Release() {
	r.releaseCur()
	if r.err == nil && r.at < r.s.Len() {
		name := r.s.Source
		if name == "" {
			name = "samples"
		}
		r.err = releasedErr(name)
	}
}

func (r *samplesReader) releaseCur() {
	if r.cur != nil {
		r.cur.Release()
		r.cur = nil
	}
}

func (r *samplesReader) Next() bool {
	r.releaseCur()
	n := r.s.Len()
	if r.at >= n || r.err != nil {
		return false
	}
	end := min(n, r.at+r.rows)
	cols := make([]arrow.Array, len(r.out))
	for i, c := range r.out {
		if c == cGroup {
			b := array.NewStringBuilder(r.mem)
			b.AppendValues(r.s.Group[r.at:end], nil)
			cols[i] = b.NewArray()
			b.Release()
			continue
		}
		cols[i] = float64Array(r.mem, (*r.s.column(c))[r.at:end])
	}
	r.cur = array.NewRecordBatch(r.sc, cols, int64(end-r.at))
	for _, a := range cols {
		a.Release()
	}
	r.at = end
	return true
}
