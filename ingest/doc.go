// Package ingest reads magnetometer logs into one canonical, streaming form.
//
// Every later stage (calibrate, inverse, report) reads the same columns:
//
//	time        seconds (absolute times as Unix seconds, UTC)
//	x, y, z     metres, local east, north, up
//	bx, by, bz  nanotesla, the same east-north-up frame (or the sensor's own
//	            axes when the schema says frame=sensor)
//	group       text: a traverse, line or sensor id (optional)
//	temp        degrees Celsius (optional)
//	roll, pitch, yaw  degrees (optional attitude)
//	qw, qx, qy, qz    attitude quaternion (optional)
//	f           scalar total field, nanotesla (optional; IAGA-2002 F)
//
// Sources are CSV (any delimiter, comment lines, column mapping such as
// bx=Bx_uT, units per column; quoted fields as in IETF RFC 4180, which may
// hold the delimiter, doubled quotes and line breaks, one record at most 16
// MiB), Apache Arrow IPC (file and stream), Parquet and IAGA-2002. Open detects the format from the first bytes of the file, not
// from its name. Readers hand out arrow.RecordBatch values through
// Next/RecordBatch/Err and hold only a few batches in memory at a time.
//
// Positions: Easting and Northing are read as east and north (x and y;
// y and x in NED), after columns named exactly x and y, and not when the
// log has latitude and longitude, which are read instead (a warning says
// so; a mapping chooses either). A log with some of
// x, y, z has the others read as 0, with a warning, listed in
// Samples.Absent and carried by a conversion (MetaAbsent). A column that
// looks like a position ("x [in]", "pos_x") but is not read, its
// position being read from nowhere else, is refused: it would be read as
// 0 without a word.
//
// CSV as spreadsheets export it is read as well: a UTF-8 byte order mark,
// CRLF or bare CR line ends, a first line "sep=;" naming the delimiter,
// decimal commas, rows of delimiters alone (the empty rows below a table,
// skipped like blank lines) and files saved in Windows-1252 or Latin-1:
// a file that is not valid UTF-8 is read as Windows-1252, header names,
// text values and comment lines alike, with a warning ("Bx (µT)",
// "Profil–Name", traverses "Öl" and "Äl"). Header names and mapped names
// are compared in Unicode form NFC.
// Lines of nothing but NUL bytes (the unwritten end of a logger's
// preallocated file, however long) are skipped with a warning.
// UTF-16 text is refused, with a request for UTF-8. Arrow and Parquet
// columns may be integers, floats (16, 32 or 64 bits), decimals, text
// (also large and view strings), dictionary-encoded values of these, and
// for time timestamps in any unit and zone.
//
// Times are seconds, or timestamps: Arrow timestamps count from the Unix
// epoch in UTC; text times are RFC 3339 ("2026-04-21T09:40:00.5+01:00",
// "Z", or " UTC"). A text time without its UTC offset, or an Arrow
// timestamp type without a time zone, is read as UTC with a warning, since
// local wall-clock times would be off by the zone's offset; a time column
// whose unit is UTC (from its name, "Time (UTC)", "time_utc", or given)
// says they are UTC and is not warned about. WithTimeOffset states the
// fixed UTC offset of text times written without one: they are read as
// that offset's local times, without the warning. WithTimeZone names an
// IANA zone instead (Europe/Berlin, from the zone database built in), so
// that each time is read at the offset in force then, across the zone's
// changes of the clocks; both apply to Arrow timestamps without a zone
// too. WithDateOrder reads
// dates in a local order, as 21/04/2026 09:40:00.000 (day first) or
// 4/21/2026 9:40 (month first), which are refused without it.
//
// # Conversions
//
// Field units: 1 uT = 1e3 nT, 1 mT = 1e6 nT, 1 G = 1e5 nT, 1 T = 1e9 nT
// (SI; the gauss is 1e-4 T); a unit with a positive step before it, as
// loggers writing counts state it ("Bx [0.1 nT]", "100pT", "1e-10T"), is
// that many of the unit. Input given as north-east-down (the geophysical
// X, Y, Z convention) is turned into east-north-up by
//
//	(e, n, u) = (y, x, -z)
//
// WGS84 latitude, longitude and ellipsoidal height become local ENU metres
// about an origin (given, the first reading, or the mean position) through
// Earth-centred Earth-fixed coordinates, with a = 6378137 m and
// 1/f = 298.257223563 (NIMA TR8350.2):
//
//	N(phi) = a / sqrt(1 - e^2 sin^2 phi),  e^2 = f (2 - f)
//	X = (N + h) cos phi cos lam,  Y = (N + h) cos phi sin lam,  Z = (N (1 - e^2) + h) sin phi
//	e = -sin lam dX + cos lam dY
//	n = -sin phi cos lam dX - sin phi sin lam dY + cos phi dZ
//	u =  cos phi cos lam dX + cos phi sin lam dY + sin phi dZ
//
// taken for the point at the reading's latitude and longitude on the
// origin's height, and the reading's up is its height above the origin's
// height, h - h0 (Geodetic.ToLocal). The tangent plane's own up u falls
// away from the ellipsoid by about d^2/(2R) at a distance d from the origin
// (0.31 m at 2 km); with up a height, a level ground keeps one up over the
// whole survey, as in a projected log, and a ground level given as a height
// holds everywhere.
//
// IAGA-2002 (INTERMAGNET technical manual) element sets become ENU nT with
// X north, Y east, Z down: XYZ gives (Y, X, -Z); HDZ gives
// (H sin D, H cos D, -Z) with D in minutes of arc; HEZ gives (E, H, -Z) with E
// the east component in nT. Variation data in HDZ and HEZ are given in the
// observatory's baseline frame: H points along the baseline declination D0
// and D (or E) is the departure from it. When the header gives D0 (the
// "# DECBAS" comment, tenths of minutes of arc east, 0 to 216000, recorded
// in Meta["decbas"]) and the data type is variation, the horizontal
// components are turned to geographic north and east by it:
//
//	HDZ: east = H sin(D0 + D), north = H cos(D0 + D)
//	HEZ: east = H sin D0 + E cos D0, north = H cos D0 - E sin D0
//
// and Meta["horizontal_frame"] says so (IAGAGeographic);
// WithIAGABaselineFrame(true) keeps the baseline frame (east = E or H sin D,
// north = H or H cos D; IAGABaselineKept), as does a variation file whose
// header gives no DECBAS (IAGABaselineNoDECBAS, which base-station
// correction warns about). Data of other types (definitive, adjusted) are
// taken as absolute and never turned: H D Z then gives geographic east and
// north, but H E Z gives E and H, the observatory's own horizontal axes,
// which are not the geographic X and Y; such data are marked
// IAGAHENotTurned, with a warning (base-station correction warns too;
// WithIAGAFrameWarning(false) leaves the reader's out), unless the baseline
// frame is kept (IAGABaselineKept). The warnings name the elements the
// column line reports (IAGAVectorElements): "H E" for a file with no Z.
// UVW is left in the instrument's axes and marked FrameSensor.
//
// # Missing values
//
// In IAGA-2002 files 99999.00 (missing) and 88888.00 (not recorded) become
// NaN in the record batches and in Samples; Collect counts the rows with a
// missing field value in Meta["missing_rows"]. In other formats an empty
// cell, a NaN or an Arrow null in a numeric column is an error unless
// WithAllowMissing is given, in which case it is NaN. A row whose group
// cell is empty or null has no group: its group is "" in every format
// (Inspect counts it as missing), and when other rows do have a group a
// warning says how many have none, since a fit by group would take them as
// one more group.
//
// # Errors
//
// Every error starts with "ingest:" and names the file and the line (CSV,
// IAGA-2002; physical lines, so a CSV record spanning several lines is named
// by the line where the offending field starts) or the batch and row (Arrow,
// Parquet; both counted from 0, and beyond the first batch the row counted
// through the file too), the column and the offending text, for example
//
//	ingest: log.csv:58: column bz: "1oo.0" is not a number
//	ingest: log.parquet: batch 2 row 18928 (row 150000 of the file, counting from 0): column by: null value; ...
//
// Two columns (or schema fields) of one name, where a mapping would read
// one of them, are an error naming the header line and both column
// numbers. Time going backwards is an error unless WithTimeOrder relaxes
// it (to within each group, or not at all). An Arrow IPC stream file that
// ends without its end-of-stream marker, after a whole message or inside
// one, is an error naming the byte offset where it stops, unless
// WithAllowUnterminatedStream accepts the record batches before the cut;
// the writers of this package (and the broker's encoder) always end their
// streams with the marker. An Arrow IPC file or a Parquet file cut short
// (without its closing magic bytes) is an error saying so. In
// IAGA-2002 files a day of year that disagrees with the date, or a value
// after the four elements, is an error. IAGA-2002 files joined end to end
// (one day's file after another's, for a base station across midnight UTC)
// are read as one series when each later header gives the same IAGA code,
// data type, data interval type, DECBAS and column line as the first;
// otherwise the later header is an error naming its line.
//
// # Warnings
//
// Problems that do not stop the reading (same-named columns of which none
// is read, two names that could both be one canonical column, IAGA-2002
// variation data in H D Z or H E Z without DECBAS, an unterminated stream
// accepted on request, times without a UTC offset, times in seconds by
// default that look like Unix milliseconds, microseconds or nanoseconds,
// rows without a group among rows with one) are warnings: Warnings(r) for a Reader,
// Samples.Warnings after Collect or ReadSamples, and Inspection.Warnings.
//
// Output files are written through WriteFileAtomic: a temporary file in the
// same directory, synced to the disk and renamed into place, the directory
// synced after, so a failed write leaves nothing behind and a power cut
// leaves the old file or the whole new one. WriteReaderTo writes a log to
// an io.Writer, for a caller that stages and places the file itself.
// WithContext also cuts short a read waiting on an idle pipe.
package ingest
