package ingest

import (
	"context"
	"fmt"
	"runtime"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// Frame names the axes of the field (and position) columns.
type Frame int

const (
	// FrameENU is local east, north, up (the canonical frame).
	FrameENU Frame = iota
	// FrameSensor is the sensor's own axes; the calibrate stage rotates
	// such readings to ENU with the attitude columns.
	FrameSensor
	// FrameNED is north, east, down (the geophysical X, Y, Z). It is an
	// input frame only: readers convert it to FrameENU.
	FrameNED
)

func (f Frame) String() string {
	switch f {
	case FrameENU:
		return "enu"
	case FrameSensor:
		return "sensor"
	case FrameNED:
		return "ned"
	}
	return fmt.Sprintf("Frame(%d)", int(f))
}

// ParseFrame parses "enu", "ned" or "sensor" (any case).
func ParseFrame(s string) (Frame, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "enu", "":
		return FrameENU, nil
	case "ned":
		return FrameNED, nil
	case "sensor":
		return FrameSensor, nil
	}
	return 0, fmt.Errorf("ingest: unknown frame %q (want enu, ned or sensor)", s)
}

// Option configures Open and ReadSamples.
type Option func(*config)

type originMode int

const (
	originFirst originMode = iota
	originMean
	originFixed
)

type config struct {
	ctx               context.Context // nil: not cancellable (WithContext)
	mapping           map[int]string  // canonical index -> source column name
	mappingText       []string        // as given, for messages
	units             map[int]string
	delim             byte // 0: detect
	whitespace        bool // fields separated by runs of blanks
	comment           string
	header            []string // names when the file has no header line
	frame             Frame
	frameSet          bool
	origin            Geodetic
	originMode        originMode
	originOfMean      bool // origin is the mean position, found by a first pass (WithOriginMean)
	allowMissing      bool
	keepImplausible   bool // WithImplausibleValues
	timeOptional      bool // a log without a time column is read, its times NaN (WithTimeOptional)
	currentRecord     bool // time and current are required, not the field (WithCurrentRecord)
	allowBackwards    bool
	groupOrder        bool          // time must not go backwards within each group (WithTimeOrder)
	allowUnterminated bool          // Arrow IPC stream files may lack the end-of-stream marker
	keepBaseline      bool          // IAGA-2002: leave variation data in the baseline frame (WithIAGABaselineFrame)
	noFrameWarning    bool          // IAGA-2002: no warning that east and north are not geographic (WithIAGAFrameWarning)
	noHeightWarning   bool          // no warning that latitude and longitude come without a height (WithHeightWarning)
	decimalComma      int           // CSV: 0 detect, 1 decimal commas, -1 decimal points (WithDecimalComma)
	timeOffset        time.Duration // UTC offset of text times written without one (WithTimeOffset)
	timeOffsetSet     bool
	timeZone          *time.Location // IANA zone of times written without an offset (WithTimeZone)
	dateOrder         DateOrder      // order of slash, dot and dash dates (WithDateOrder)
	timeText          timeText       // how text times are read, from the three above (newConfig)
	batchRows         int
	chunkBytes        int
	workers           int
	mem               memory.Allocator
	progress          func(rows int64)
	slowOnly          bool  // tests: CSV general path only
	err               error // first bad option, reported by Open
}

func newConfig(opts []Option) *config {
	c := &config{
		mapping:    map[int]string{},
		units:      map[int]string{},
		comment:    "#",
		batchRows:  64 * 1024,
		chunkBytes: 1 << 20,
		workers:    runtime.GOMAXPROCS(0),
		mem:        memory.DefaultAllocator,
	}
	for _, o := range opts {
		if o != nil { // a nil Option changes nothing
			o(c)
		}
	}
	if c.workers < 1 || c.timeZone != nil {
		// In a zone, the hour repeated when the clocks go back is
		// resolved in file order (zoneClock).
		c.workers = 1
	}
	c.timeText = timeTextOf(c)
	return c
}

func (c *config) fail(format string, a ...any) {
	if c.err == nil {
		c.err = fmt.Errorf("ingest: "+format, a...)
	}
}

// WithColumns maps canonical columns to the file's column names, each pair
// written "canonical=source" ("bx=Bx_uT"). Besides the canonical names the
// targets lat, lon and height name WGS84 position columns. Pairs may also
// be joined by commas in one string ("bx=B1,by=B2"); a part after a comma
// that holds no "=" continues the name before it, so a name holding a
// comma is given as it is ("bx=Field X, nT"), whether the parts come in
// one string or, split at its commas, in several.
func WithColumns(pairs ...string) Option {
	return func(c *config) {
		var parts []string
		for _, p := range pairs {
			for _, q := range strings.Split(p, ",") {
				if !strings.Contains(q, "=") && len(parts) > 0 && strings.TrimSpace(q) != "" {
					parts[len(parts)-1] += "," + q
					continue
				}
				parts = append(parts, q)
			}
		}
		for _, q := range parts {
			q = strings.TrimSpace(q)
			if q == "" {
				continue
			}
			k, v, ok := strings.Cut(q, "=")
			k, v = strings.ToLower(strings.TrimSpace(k)), strings.TrimSpace(v)
			i, known := canonIndex(k)
			if !ok || v == "" || !known {
				c.fail("column mapping %q: want canonical=source with canonical one of %s", q, strings.Join(canonNames[:], ", "))
				continue
			}
			c.mapping[i] = v
			c.mappingText = append(c.mappingText, k+"="+v)
		}
	}
}

// WithUnits sets the unit of canonical columns, each pair written
// "column=unit" ("bx=uT", "time=ms"). Field units: nT, uT, mT, G, T, pT;
// lengths: m, cm, mm, km, ft; angles: deg, rad; time: s, ms, us, ns, or
// UTC: seconds, and timestamps without a UTC offset are UTC (not warned
// about; see the package documentation).
// Without it a unit suffix in the header ("Bx_uT", "Bx (uT)", "Bx[uT]") is
// used, else the canonical unit.
func WithUnits(pairs ...string) Option {
	return func(c *config) {
		for _, p := range pairs {
			for _, q := range strings.Split(p, ",") {
				q = strings.TrimSpace(q)
				if q == "" {
					continue
				}
				k, v, ok := strings.Cut(q, "=")
				k, v = strings.ToLower(strings.TrimSpace(k)), strings.TrimSpace(v)
				i, known := canonIndex(k)
				if !ok || !known {
					c.fail("unit %q: want column=unit with column one of %s", q, strings.Join(canonNames[:], ", "))
					continue
				}
				if _, err := unitScale(kindOf(i), v); err != nil {
					c.fail("unit %q: %v", q, err)
					continue
				}
				c.units[i] = v
			}
		}
	}
}

// WithDelimiter sets the CSV field delimiter; ' ' means runs of blanks.
// Without it the delimiter is guessed from the header line among
// comma, semicolon, tab, '|' and blanks.
func WithDelimiter(d rune) Option {
	return func(c *config) {
		if d <= 0 || d > 127 || d == '"' || d == '\n' || d == '\r' {
			c.fail("delimiter %q: want a single ASCII character", d)
			return
		}
		if d == ' ' {
			c.whitespace = true
		}
		c.delim = byte(d)
	}
}

// WithComment sets the prefix of CSV comment lines (default "#"); "" turns
// comment lines off.
func WithComment(prefix string) Option { return func(c *config) { c.comment = prefix } }

// WithHeader gives the column names of a CSV file that has no header line.
func WithHeader(names ...string) Option {
	return func(c *config) { c.header = append([]string(nil), names...) }
}

// WithFrame says which axes the field and position columns use: FrameENU
// (default), FrameNED (converted to ENU on reading) or FrameSensor (kept,
// and marked for the calibrate stage).
func WithFrame(f Frame) Option { return func(c *config) { c.frame, c.frameSet = f, true } }

// WithOrigin sets the origin of local ENU coordinates for logs whose
// positions are WGS84 latitude, longitude and height.
func WithOrigin(o Geodetic) Option {
	return func(c *config) { c.origin, c.originMode = o, originFixed }
}

// WithOriginMean puts the ENU origin at the mean position of the log's
// readings that have one (at the cost of reading the file twice). The
// default origin is the first reading with a finite latitude, longitude
// and height, in every format.
func WithOriginMean() Option { return func(c *config) { c.originMode = originMean } }

// WithOriginFirst puts the ENU origin at the log's first reading, the
// default; given after WithOrigin or WithOriginMean, it undoes them (a
// look at a log's first reading with otherwise the same options).
func WithOriginFirst() Option { return func(c *config) { c.originMode = originFirst } }

// WithImplausibleValues reads finite values no survey gives (|B| above
// 1e17 nT, a time beyond 1e20 s, a position beyond 1e8 m: checkPlausible)
// as they are, rather than refusing the log at the first: for replay,
// which sends such readings on for the service to refuse.
func WithImplausibleValues(ok bool) Option { return func(c *config) { c.keepImplausible = ok } }

// WithAllowMissing accepts missing values in numeric columns as NaN: empty
// cells, Arrow nulls and the markers NaN, NA, N/A, #N/A, null, None, "-"
// and "--" in any case. By default they are errors.
func WithAllowMissing(ok bool) Option { return func(c *config) { c.allowMissing = ok } }

// WithTimeOptional(true) reads a log that has no time column, for readers
// that use no time (a calibration from the field alone). Its time column
// is NaN, its schema carries MetaTime "absent" and Samples.NoTime is set;
// time order is not checked. A log that has a time column is read as
// without the option. By default a log without one is an error naming the
// file and the columns found.
func WithTimeOptional(ok bool) Option { return func(c *config) { c.timeOptional = ok } }

// WithCurrentRecord(true) reads a current record: a log of a conductor's
// current in time (a rectifier's or a clamp meter's), whose required
// columns are time and current (ColCurrent, in A unless a unit option or
// the name's suffix says mA or kA: "current_A", "I (kA)" mapped to
// current) instead of bx, by and bz. Samples.Current holds it.
func WithCurrentRecord(ok bool) Option { return func(c *config) { c.currentRecord = ok } }

// WithAllowBackwards(true) accepts time going backwards anywhere, as
// WithTimeOrder(TimeAnyOrder) does; WithAllowBackwards(false) restores the
// default, TimeOrdered.
func WithAllowBackwards(ok bool) Option {
	return func(c *config) { c.allowBackwards, c.groupOrder = ok, false }
}

// TimeOrder says where time may not go backwards (see WithTimeOrder).
type TimeOrder int

const (
	// TimeOrdered: time never goes backwards from one row to the next
	// (equal times are allowed). The default.
	TimeOrdered TimeOrder = iota
	// TimeOrderedPerGroup: time never goes backwards from one row of a
	// group (a value of the group column: a sensor, a traverse) to the next
	// row of the same group, while rows of different groups may come in any
	// order, as in a log sorted by sensor or traverses logged out of
	// order. Without a group column it is TimeOrdered.
	TimeOrderedPerGroup
	// TimeAnyOrder: no check.
	TimeAnyOrder
)

// ParseTimeOrder parses "ordered", "per-group" (or "group") and "any".
func ParseTimeOrder(s string) (TimeOrder, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "ordered", "":
		return TimeOrdered, nil
	case "per-group", "group":
		return TimeOrderedPerGroup, nil
	case "any":
		return TimeAnyOrder, nil
	}
	return 0, fmt.Errorf("ingest: unknown time order %q (want ordered, per-group or any)", s)
}

// WithTimeOrder says where time may not go backwards; a step back where it
// may not is an error naming the line (or batch and row). The default is
// TimeOrdered.
func WithTimeOrder(o TimeOrder) Option {
	return func(c *config) {
		switch o {
		case TimeOrdered:
			c.allowBackwards, c.groupOrder = false, false
		case TimeOrderedPerGroup:
			c.allowBackwards, c.groupOrder = false, true
		case TimeAnyOrder:
			c.allowBackwards, c.groupOrder = true, false
		default:
			c.fail("time order %d: want TimeOrdered, TimeOrderedPerGroup or TimeAnyOrder", int(o))
		}
	}
}

// WithAllowUnterminatedStream(true) reads an Arrow IPC stream file that ends
// without its end-of-stream marker (0xFFFFFFFF 0x00000000), as a writer
// stopped mid-run or a copy cut short leaves it: after a whole message, or
// inside one (its length prefix, metadata or body stops short). The record
// batches before the cut are read and a warning names the byte offset where
// the file stops and the rows kept (see Warnings). By default such a file is
// an error naming the byte offset where it stops and where the last whole
// record batch ends. A stream cut inside its schema message holds no rows
// and is an error either way. Streams that are not regular files (pipes)
// may end without the marker after a whole message, as the format allows.
//
// A CSV file whose last line, without a line end, looks cut short (short
// of a field, or its last value short of the digits that column has on the
// lines before it) is read without that line, with a warning naming it,
// with this option or without.
func WithAllowUnterminatedStream(ok bool) Option {
	return func(c *config) { c.allowUnterminated = ok }
}

// WithIAGABaselineFrame(true) leaves IAGA-2002 variation data in H D Z or
// H E Z in the observatory's baseline frame. By default, when the header gives
// the baseline declination (the "# DECBAS" comment, tenths of minutes of arc
// east), the horizontal components are turned by it to geographic north and
// east (see the package documentation). H E Z data of another type, which
// are never turned, are then read without the warning that their east and
// north are not geographic (IAGAHENotTurned).
func WithIAGABaselineFrame(keep bool) Option { return func(c *config) { c.keepBaseline = keep } }

// WithIAGAFrameWarning(false) leaves out the warning that the east and
// north of an IAGA-2002 file are not geographic: H E Z data other than
// variation data (IAGAHENotTurned), and variation data whose header gives
// no DECBAS (IAGABaselineNoDECBAS). Meta["horizontal_frame"] says so all
// the same. It is for a caller that states it in its own words, as a
// base-station correction does (calibrate.BaseCorrect, whose warning says
// what it means for the correction), so that it is not given twice. By
// default (true) the reader warns.
func WithIAGAFrameWarning(on bool) Option { return func(c *config) { c.noFrameWarning = !on } }

// WithHeightWarning(false) leaves out the warning that a log with latitude
// and longitude has no height column (every reading then placed at height
// 0 on the WGS84 ellipsoid). It is for a caller that does not use the
// log's positions, as a base-station correction does not: a base log that
// records its fixed position drew advice to map a height that could change
// nothing (found in review). By default (true) the reader warns.
func WithHeightWarning(on bool) Option { return func(c *config) { c.noHeightWarning = !on } }

// WithDecimalComma says whether CSV numbers write their decimals with a
// comma (12,5) instead of a point (12.5), as spreadsheets do in many locales.
// By default a file whose delimiter is not a comma is read with decimal
// commas when a mapped numeric field of its first data record is written
// that way (digits, one comma, digits). With decimal commas a point in a
// number is an error (it could be a thousands separator), not a decimal.
func WithDecimalComma(on bool) Option {
	return func(c *config) {
		c.decimalComma = -1
		if on {
			c.decimalComma = 1
		}
	}
}

// WithBatchSize sets the number of rows per record batch (default 65536)
// of the readers that choose it: IAGA-2002 and Parquet. CSV batches follow
// its parse chunks, and an Arrow IPC file or stream keeps the batches it
// was written in (NewSamplesReader takes its batch size as an argument).
func WithBatchSize(rows int) Option {
	return func(c *config) {
		if rows > 0 {
			c.batchRows = rows
		}
	}
}

// WithWorkers sets the number of CSV parser goroutines (default GOMAXPROCS).
func WithWorkers(n int) Option { return func(c *config) { c.workers = n } }

// WithAllocator sets the Arrow memory allocator for the record batches.
func WithAllocator(mem memory.Allocator) Option { return func(c *config) { c.mem = mem } }

// withChunkBytes sets the CSV parse chunk size (tests use small chunks to
// exercise chunk boundaries).
func withChunkBytes(n int) Option { return func(c *config) { c.chunkBytes = n } }

// withSlowPathOnly turns off the CSV single-pass line parser (tests compare
// it with the general path).
func withSlowPathOnly() Option { return func(c *config) { c.slowOnly = true } }

// WithContext stops a read between record batches once ctx is done:
// Next returns false and Err is an *Error whose cause is ctx's error
// (context.Canceled or context.DeadlineExceeded), so that a long read can
// be cancelled from another goroutine through ctx (a Reader's own methods
// are for one goroutine) and ReadSamples keeps what its readers carry (the
// warnings, the frame, the source). With WithOriginMean the first pass
// over the log stops too.
func WithContext(ctx context.Context) Option { return func(c *config) { c.ctx = ctx } }

// WithProgress calls fn with the number of rows read so far after every
// record batch a reader hands out, from the goroutine that calls Next. It
// is meant for progress displays; fn must return quickly.
func WithProgress(fn func(rows int64)) Option { return func(c *config) { c.progress = fn } }
