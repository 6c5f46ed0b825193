package ingest

import (
	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// Canonical column names.
const (
	ColTime  = "time"
	ColX     = "x"
	ColY     = "y"
	ColZ     = "z"
	ColBx    = "bx"
	ColBy    = "by"
	ColBz    = "bz"
	ColGroup = "group"
	ColTemp  = "temp"
	ColRoll  = "roll"
	ColPitch = "pitch"
	ColYaw   = "yaw"
	ColQw    = "qw"
	ColQx    = "qx"
	ColQy    = "qy"
	ColQz    = "qz"
	// ColF is the scalar total field in nT (IAGA-2002 F), an addition to
	// the agreed set; absent from most logs.
	ColF = "f"
	// ColCurrent is a conductor's current in amperes, the column of a
	// current record (a rectifier's or a clamp meter's log, read with
	// WithCurrentRecord); an addition to the agreed set, absent from
	// magnetometer logs.
	ColCurrent = "current"
	// ColSigmaPlan and ColSigmaUp are a reading's own one-sigma position
	// uncertainty, m, across the plan (east and north, each) and in
	// height: a positioned survey's per-fix accuracy estimate (a GNSS
	// receiver's horizontal and vertical accuracy, small with RTK fixed,
	// large with float), which inverse.Problem.PositionSigmas carries
	// into the fit; an addition to the agreed set, absent from most logs.
	ColSigmaPlan = "sigma_plan"
	ColSigmaUp   = "sigma_up"
)

// Names of input-only columns that carry WGS84 positions. They never appear
// in a canonical batch: they are converted to x, y, z.
const (
	colLat    = "lat"
	colLon    = "lon"
	colHeight = "height"
)

// Schema metadata keys written by this package so that a frame, an origin
// and header fields survive a conversion between formats.
const (
	MetaFrame  = "undercurrent.frame"  // "enu" or "sensor" as written; "ned" is read too (turned to ENU)
	MetaOrigin = "undercurrent.origin" // "lat lon h" (degrees, degrees, metres)
	MetaPrefix = "undercurrent.meta."  // + key of Samples.Meta
	// MetaTime is "absent" in the schema of a log read without a time
	// column (WithTimeOptional): its time column is NaN.
	MetaTime = "undercurrent.time"
	// MetaAbsent lists, separated by blanks, the position columns (x, y,
	// z) that the log was read without and that hold 0 for every row:
	// written so that a conversion of such a log does not pass the zeros
	// on as positions. Samples.Absent holds them.
	MetaAbsent = "undercurrent.absent"
)

// Internal indices of the canonical and input-only columns, in output order.
const (
	cTime = iota
	cX
	cY
	cZ
	cBx
	cBy
	cBz
	cGroup
	cTemp
	cRoll
	cPitch
	cYaw
	cQw
	cQx
	cQy
	cQz
	cF
	cCurrent
	cSigmaPlan
	cSigmaUp
	cLat
	cLon
	cHeight
	nCanon
	nOut = cLat // columns below cLat can appear in output
)

var canonNames = [nCanon]string{
	ColTime, ColX, ColY, ColZ, ColBx, ColBy, ColBz, ColGroup, ColTemp,
	ColRoll, ColPitch, ColYaw, ColQw, ColQx, ColQy, ColQz, ColF, ColCurrent,
	ColSigmaPlan, ColSigmaUp,
	colLat, colLon, colHeight,
}

// aliases are other header names recognised without a mapping option
// (compared case-insensitively after any unit suffix is removed).
var aliases = map[string]int{
	"t": cTime, "timestamp": cTime, "datetime": cTime, "utc": cTime, "epoch": cTime,
	"traverse": cGroup, "sensor": cGroup, "sensor_id": cGroup,
	"temperature": cTemp,
	"latitude":    cLat, "lng": cLon, "long": cLon, "longitude": cLon,
	"alt": cHeight, "altitude": cHeight, "elevation": cHeight, "ellipsoidal_height": cHeight,
	// Heights as GNSS receivers and their exports name them: above the
	// ellipsoid, or above the geoid (mean sea level), which differs from
	// it by the geoid's separation, nearly constant across a site (the
	// local east, north, up positions are then right; the origin's height
	// is off by that separation).
	"ellipsoid_height": cHeight, "ellipsoid height": cHeight, "ellipsoidal height": cHeight,
	"height_ellipsoid": cHeight, "height above ellipsoid": cHeight, "height_above_ellipsoid": cHeight,
	"hae": cHeight, "orthometric_height": cHeight, "orthometric height": cHeight,
	"height_msl": cHeight, "msl_height": cHeight, "alt_msl": cHeight, "altitude_msl": cHeight,
	"elev": cHeight, "ele": cHeight,
	// A map grid's coordinates are east and north in metres (or the unit
	// their suffix gives): "Easting (m)", "northing_ft".
	"easting": cX, "northing": cY,
	// A receiver's per-fix accuracy estimates as loggers and exports name
	// them (horizontal and vertical; the unit by suffix, "hacc_mm").
	"hacc": cSigmaPlan, "h_acc": cSigmaPlan, "horizontal_accuracy": cSigmaPlan, "horizontal accuracy": cSigmaPlan,
	"sigma_h": cSigmaPlan, "sigma_horizontal": cSigmaPlan, "std_h": cSigmaPlan,
	"vacc": cSigmaUp, "v_acc": cSigmaUp, "vertical_accuracy": cSigmaUp, "vertical accuracy": cSigmaUp,
	"sigma_v": cSigmaUp, "sigma_vertical": cSigmaUp, "std_v": cSigmaUp,
}

func canonIndex(name string) (int, bool) {
	for i, n := range canonNames {
		if n == name {
			return i, true
		}
	}
	return 0, false
}

// kind of quantity, which decides the units a column accepts.
type kind int

const (
	kindTime kind = iota
	kindLength
	kindField
	kindAngle
	kindTemp
	kindCurrent
	kindPlain // quaternion components, group
	kindDegrees
)

func kindOf(c int) kind {
	switch c {
	case cTime:
		return kindTime
	case cX, cY, cZ, cHeight, cSigmaPlan, cSigmaUp:
		return kindLength
	case cBx, cBy, cBz, cF:
		return kindField
	case cRoll, cPitch, cYaw:
		return kindAngle
	case cTemp:
		return kindTemp
	case cCurrent:
		return kindCurrent
	case cLat, cLon:
		return kindDegrees
	}
	return kindPlain
}

// isSigma reports whether c is a position sigma column, whose values
// may not be negative.
func isSigma(c int) bool { return c == cSigmaPlan || c == cSigmaUp }

func fieldType(c int) arrow.DataType {
	if c == cGroup {
		return arrow.BinaryTypes.String
	}
	return arrow.PrimitiveTypes.Float64
}

// Float64Column returns the values of rec's float64 column named name (a
// view of the batch's buffer, valid while rec is), nil when rec has no
// such column or it holds another type.
func Float64Column(rec arrow.RecordBatch, name string) []float64 {
	for _, i := range rec.Schema().FieldIndices(name) {
		if a, ok := rec.Column(i).(*array.Float64); ok {
			return a.Float64Values()
		}
	}
	return nil
}
