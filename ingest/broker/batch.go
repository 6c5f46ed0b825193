package broker

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strings"

	"undercurrent/ingest"
)

// Batch is one decoded sensor message: consecutive samples of one
// three-axis sensor of one asset. Fields are in nanotesla in the sensor's
// own frame (the site file gives each sensor's orientation); times are
// seconds (Unix seconds for live data).
type Batch struct {
	Asset, Sensor string
	Time          []float64
	Bx, By, Bz    []float64
	Temp          []float64 // nil when absent
}

// Len returns the number of samples.
func (b *Batch) Len() int { return len(b.Time) }

// Payload encodings, as sent in the Content-Type header. MQTT messages
// carry no headers, so Decode also recognises each encoding by its first
// bytes.
const (
	ContentJSON  = "application/json"
	ContentArrow = "application/vnd.apache.arrow.stream"
)

// ErrMalformed marks payloads that cannot be decoded or fail validation.
var ErrMalformed = errors.New("malformed payload")

// ErrDecodedTooLarge marks payloads that would decode to more memory than
// the decode limit (a compressed Arrow stream can declare gigabytes in a few
// kilobytes). Such errors also wrap ErrMalformed.
var ErrDecodedTooLarge = errors.New("payload decodes past the limit")

// DefaultMaxDecoded is the decode limit of Decode: 16 MiB, sixteen times the
// pipeline's default max_message_bytes.
const DefaultMaxDecoded = 16 << 20

// jsonBatch is the JSON sample-batch payload (see the package documentation).
type jsonBatch struct {
	Asset  string    `json:"asset,omitempty"`
	Sensor string    `json:"sensor,omitempty"`
	Time   []float64 `json:"time,omitempty"`
	T0     *float64  `json:"t0,omitempty"`
	Rate   *float64  `json:"rate,omitempty"`
	Bx     []float64 `json:"bx"`
	By     []float64 `json:"by"`
	Bz     []float64 `json:"bz"`
	Temp   []float64 `json:"temp,omitempty"`
}

// Decode decodes a payload received on subject uc.data.<asset>.<sensor>.
// contentType may be empty (MQTT), in which case a payload starting with
// '{' is JSON and one starting with the Arrow IPC continuation marker
// 0xFFFFFFFF is an Arrow IPC stream. The batch is validated (see Validate).
// Errors wrap ErrMalformed and name the subject, the row and the column.
// Decoding may take at most DefaultMaxDecoded bytes; see DecodeLimit.
func Decode(subject, contentType string, data []byte) (*Batch, error) {
	return DecodeLimit(subject, contentType, data, DefaultMaxDecoded)
}

// DecodeLimit is Decode with a bound on the memory decoding may take:
// an Arrow stream whose messages and (decompressed) buffers add up to more
// than maxDecoded bytes is refused before the memory is allocated, with an
// error wrapping ErrDecodedTooLarge and ErrMalformed. A JSON payload needs
// at most a few bytes of memory per byte of text (a shortest number, "0,",
// becomes 8 bytes), so it is bounded by the payload size and not checked.
func DecodeLimit(subject, contentType string, data []byte, maxDecoded int64) (*Batch, error) {
	asset, sensor, err := ParseDataSubject(subject)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrMalformed, err)
	}
	var b *Batch
	switch {
	case contentType == ContentJSON || (contentType == "" && looksJSON(data)):
		b, err = decodeJSON(subject, data)
	case contentType == ContentArrow || (contentType == "" && looksArrow(data)):
		b, err = decodeArrow(subject, data, maxDecoded)
	default:
		head := data
		if len(head) > 16 {
			head = head[:16]
		}
		err = fmt.Errorf("broker: %s: unknown payload encoding (content type %q, first bytes %q)", subject, contentType, head)
	}
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrMalformed, err)
	}
	if b.Asset != "" && b.Asset != asset {
		return nil, fmt.Errorf("%w: broker: %s: payload names asset %q", ErrMalformed, subject, b.Asset)
	}
	if b.Sensor != "" && b.Sensor != sensor {
		return nil, fmt.Errorf("%w: broker: %s: payload names sensor %q", ErrMalformed, subject, b.Sensor)
	}
	b.Asset, b.Sensor = asset, sensor
	if err := b.Validate(subject); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrMalformed, err)
	}
	if err := b.CheckField(subject); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrMalformed, err)
	}
	return b, nil
}

func looksJSON(data []byte) bool {
	t := bytes.TrimLeft(data, " \t\r\n")
	return len(t) > 0 && t[0] == '{'
}

func looksArrow(data []byte) bool {
	return len(data) >= 8 && data[0] == 0xFF && data[1] == 0xFF && data[2] == 0xFF && data[3] == 0xFF
}

func decodeJSON(subject string, data []byte) (*Batch, error) {
	var jb jsonBatch
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&jb); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line, col := lineCol(data, se.Offset-1) // Offset is just past the bad byte
			return nil, fmt.Errorf("broker: %s: line %d column %d: %v", subject, line, col, se)
		case errors.As(err, &te):
			line, col := lineCol(data, te.Offset)
			return nil, fmt.Errorf("broker: %s: line %d column %d: field %q: %s is not a %s", subject, line, col, te.Field, te.Value, te.Type)
		}
		return nil, fmt.Errorf("broker: %s: %v", subject, err)
	}
	// Nothing may follow the batch object: a second object (messages
	// concatenated by a gateway) would otherwise be dropped unseen.
	if off := dec.InputOffset(); len(bytes.TrimSpace(data[off:])) > 0 {
		rest := bytes.TrimLeft(data[off:], " \t\r\n")
		line, col := lineCol(data, int64(len(data)-len(rest)))
		return nil, fmt.Errorf("broker: %s: line %d column %d: content after the batch object (one batch per message)", subject, line, col)
	}
	if err := checkKeys(subject, data); err != nil {
		return nil, err
	}
	// encoding/json leaves a null array element at 0: a reading a gateway
	// marked missing would become 0 nT. Look for nulls only when the
	// payload has the word, with a slower decode that keeps them.
	if bytes.Contains(data, []byte("null")) {
		if err := findNull(subject, data); err != nil {
			return nil, err
		}
	}
	b := &Batch{Asset: jb.Asset, Sensor: jb.Sensor, Bx: jb.Bx, By: jb.By, Bz: jb.Bz, Temp: jb.Temp}
	switch {
	case jb.Time != nil && jb.T0 != nil:
		return nil, fmt.Errorf("broker: %s: give either \"time\" or \"t0\" with \"rate\", not both", subject)
	case jb.Time != nil:
		b.Time = jb.Time
	case jb.T0 != nil && jb.Rate == nil:
		// Not "rate 0": the gateway sent no rate at all.
		return nil, fmt.Errorf("broker: %s: \"t0\" needs \"rate\" (samples per second): give both, or \"time\" instead", subject)
	case jb.T0 != nil:
		rate := *jb.Rate
		if !(rate > 0) || math.IsInf(rate, 0) {
			return nil, fmt.Errorf("broker: %s: column rate: %v is not a positive sample rate", subject, rate)
		}
		b.Time = make([]float64, len(jb.Bx))
		for i := range b.Time {
			b.Time[i] = *jb.T0 + float64(i)/rate
		}
	default:
		return nil, fmt.Errorf("broker: %s: missing \"time\" (or \"t0\" and \"rate\")", subject)
	}
	return b, nil
}

// jsonKeys are the keys of a JSON batch, as written (jsonBatch's tags).
var jsonKeys = map[string]bool{"asset": true, "sensor": true, "time": true, "t0": true, "rate": true, "bx": true, "by": true, "bz": true, "temp": true}

// checkKeys refuses a batch object that gives a key twice or a key in
// another case than its own ("BX"), naming the line and column: before,
// encoding/json kept the last of two "bx" in silence and took "BX" as bx.
// The values are skipped whole, not walked.
func checkKeys(subject string, data []byte) error {
	dec := json.NewDecoder(bytes.NewReader(data))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return nil // the decode before has refused anything else
	}
	seen := map[string]bool{}
	for dec.More() {
		at := dec.InputOffset()
		t, err := dec.Token()
		if err != nil {
			return nil
		}
		k, _ := t.(string)
		rest := bytes.TrimLeft(data[at:], " \t\r\n,")
		line, col := lineCol(data, int64(len(data)-len(rest)))
		switch {
		case seen[k]:
			return fmt.Errorf("broker: %s: line %d column %d: key %q given twice (one value per key)", subject, line, col, k)
		case !jsonKeys[k]:
			return fmt.Errorf("broker: %s: line %d column %d: key %q: keys are lower case (%s)", subject, line, col, k, strings.ToLower(k))
		}
		seen[k] = true
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			return nil
		}
	}
	return nil
}

// findNull refuses a payload with a null in a number column, naming the
// row and column (as the Arrow decoder does).
func findNull(subject string, data []byte) error {
	var nb struct {
		Time   []*float64 `json:"time"`
		T0     *float64   `json:"t0"`
		Rate   *float64   `json:"rate"`
		Bx     []*float64 `json:"bx"`
		By     []*float64 `json:"by"`
		Bz     []*float64 `json:"bz"`
		Temp   []*float64 `json:"temp"`
		Asset  string     `json:"asset"`
		Sensor string     `json:"sensor"`
	}
	if err := json.Unmarshal(data, &nb); err != nil {
		return fmt.Errorf("broker: %s: %v", subject, err)
	}
	for _, c := range []struct {
		name string
		v    []*float64
	}{{"time", nb.Time}, {"bx", nb.Bx}, {"by", nb.By}, {"bz", nb.Bz}, {"temp", nb.Temp}} {
		for i, x := range c.v {
			if x == nil {
				return fmt.Errorf("broker: %s: row %d: column %s: null value (leave a missing reading out of the batch)", subject, i+1, c.name)
			}
		}
	}
	return nil
}

// lineCol converts a byte offset into a 1-based line and column.
func lineCol(data []byte, off int64) (line, col int) {
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	line, col = 1, 1
	for _, c := range data[:off] {
		if c == '\n' {
			line++
			col = 1
		} else {
			col++
		}
	}
	return line, col
}

// Validate checks that the batch is non-empty, that its columns have the
// same length, that every value is finite and that times strictly increase.
// where names the message in errors (a subject, or a file and batch).
func (b *Batch) Validate(where string) error {
	n := len(b.Time)
	if n == 0 {
		return fmt.Errorf("broker: %s: batch has no samples", where)
	}
	cols := []struct {
		name string
		v    []float64
		opt  bool
	}{{"time", b.Time, false}, {"bx", b.Bx, false}, {"by", b.By, false}, {"bz", b.Bz, false}, {"temp", b.Temp, true}}
	for _, c := range cols {
		if c.opt && c.v == nil {
			continue
		}
		if len(c.v) != n {
			return fmt.Errorf("broker: %s: column %s has %d values, column time has %d", where, c.name, len(c.v), n)
		}
		for i, x := range c.v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return fmt.Errorf("broker: %s: row %d: column %s: %v is not a finite number", where, i+1, c.name, x)
			}
		}
	}
	for i := 1; i < n; i++ {
		if !(b.Time[i] > b.Time[i-1]) {
			return fmt.Errorf("broker: %s: row %d: column time: %v does not follow %v (times must increase)", where, i+1, b.Time[i], b.Time[i-1])
		}
	}
	return nil
}

// MaxFieldNT is the largest field magnitude |B| a reading may have, nT:
// 0.1 T, a hundred times the range of a survey fluxgate (about +-1 mT)
// and two thousand times the Earth's field (the bound locate's unit check
// uses). No buried conductor gives it (500 kA at 1 m, by Biot-Savart);
// a reading above it is a corrupt value or a wrong scale, and one such
// reading (1e200 nT) makes a window's fit overflow. The file readers
// refuse a reading above it too (ingest.MaxFieldNT, the same bound).
const MaxFieldNT = ingest.MaxFieldNT

// fieldMagnitude is |B| of one reading, without overflow for finite
// components.
func fieldMagnitude(bx, by, bz float64) float64 { return math.Hypot(math.Hypot(bx, by), bz) }

// CheckField returns an error naming the first row whose field magnitude
// |B| is above MaxFieldNT (Decode refuses such a batch). where names the
// message in errors.
func (b *Batch) CheckField(where string) error {
	for i := range b.Bx {
		if m := fieldMagnitude(b.Bx[i], b.By[i], b.Bz[i]); m > MaxFieldNT {
			return fmt.Errorf("broker: %s: row %d: field magnitude |B| = %.4g nT (bx %.4g, by %.4g, bz %.4g) is above 0.1 T (%g nT), which no magnetometer reading of a buried conductor gives: a corrupt value or a wrong unit", where, i+1, m, b.Bx[i], b.By[i], b.Bz[i], float64(MaxFieldNT))
		}
	}
	return nil
}

// FieldOver counts the readings of b whose |B| is above MaxFieldNT.
func (b *Batch) FieldOver() int {
	n := 0
	for i := range b.Bx {
		if fieldMagnitude(b.Bx[i], b.By[i], b.Bz[i]) > MaxFieldNT {
			n++
		}
	}
	return n
}

// EncodeJSON encodes b as a JSON sample batch with explicit times.
func EncodeJSON(b *Batch) ([]byte, error) {
	return json.Marshal(jsonBatch{Time: b.Time, Bx: b.Bx, By: b.By, Bz: b.Bz, Temp: b.Temp})
}
