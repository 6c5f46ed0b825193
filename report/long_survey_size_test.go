package report

import (
	"bytes"
	"encoding/json"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// longSurveyScenario is an invented "Corrie Dyke" route: 20 A DC in a
// straight line 1 m under level ground, read 0.3 m over it along 120
// traverses 2 m apart, each 8 m long and read every 2 cm (401 readings a
// traverse, more than the 240 a group's profile keeps).
const longSurveyScenario = `name = "corrie-dyke"
site = "Corrie Dyke feeder (invented)"
seed = 7
start = "2026-03-03T09:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [238.0, 0.0]]
count = 120
spacing_m = 2.0
length_m = 8.0
speed_m_s = 1.0
sample_spacing_m = 0.02
turn_s = 2.0
[[conductor]]
name = "feeder"
kind = "polyline"
vertices = [[-20.0, 0.0, -1.0], [260.0, 0.0, -1.0]]
currents_a = [20.0]
`

// readingDot matches a reading's dot in the plan view: a circle of radius
// 1.2 pt drawn as two arcs in the survey grey (plot.go colSurvey), its
// path starting at the circle's rightmost point.
var readingDot = regexp.MustCompile(`<path d="M([-0-9.e]+),([-0-9.e]+)A1\.2,1\.2 [^"]*" style="fill:#9AA5B1" />`)

// TestLongSurveyReportSize: the crew report of a long survey grows with
// the ground it covers, not with its readings. Every group's profile
// readings were drawn in the plan view one by one, twice (wide and
// phone): a 600-traverse survey's report.html was 32.5 MB, 144 000 dots in
// 3 000 visible half-point places. Checked on the simulated survey:
//
//   - the plan view draws at most two dots for each distinct half-point
//     cell their centres fall in (two dots closer than that, well within
//     a dot 2.4 pt across, are one mark to the eye; the thinning's cells,
//     half a point of the figure's side, come out a little smaller on the
//     page, where the axes take room), with room for a dot kept at each
//     extreme of east and north;
//   - report.html stays under 1 MB plus 12 kB a traverse (the report
//     before this held about 54 kB a traverse, nearly all of it dots;
//     the fixed part holds the four profile figures, each drawn twice);
//   - results.json writes the profiles' numbers rounded (positions and
//     offsets to 1 mm, fields to 0.01 nT: README), while each fitted
//     current reads back exactly as computed.
func TestLongSurveyReportSize(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 120 traverses")
	}
	sc, err := simulate.Parse([]byte(longSurveyScenario), "corrie-dyke.toml")
	if err != nil {
		t.Fatal(err)
	}
	d := simulatedDoc(t, sc)
	const traverses = 120
	if len(d.Groups) != traverses {
		t.Fatalf("%d groups, want %d", len(d.Groups), traverses)
	}
	var b bytes.Buffer
	if err := WriteHTML(&b, d); err != nil {
		t.Fatal(err)
	}
	html := b.String()
	i := strings.Index(html, `aria-label="plan view`)
	if i < 0 {
		t.Fatal("no plan view in the report")
	}
	plan := html[i : i+strings.Index(html[i:], "</svg>")]
	dots := readingDot.FindAllStringSubmatch(plan, -1)
	cells := map[[2]int]bool{}
	for _, m := range dots {
		x, _ := strconv.ParseFloat(m[1], 64)
		y, _ := strconv.ParseFloat(m[2], 64)
		cells[[2]int{int(math.Floor((x - 1.2) / 0.5)), int(math.Floor(y / 0.5))}] = true
	}
	if len(dots) == 0 {
		t.Fatal("the plan view draws no readings")
	}
	if len(dots) > 2*len(cells)+4 {
		t.Errorf("plan view draws %d reading dots in %d distinct half-point cells: dots hidden under each other", len(dots), len(cells))
	}
	if limit := 1<<20 + traverses*12<<10; len(html) > limit {
		t.Errorf("report.html is %d bytes for %d traverses, over %d", len(html), traverses, limit)
	}
	t.Logf("report.html %d bytes (%d a traverse), plan view %d dots in %d cells", len(html), len(html)/traverses, len(dots), len(cells))

	b.Reset()
	if err := WriteJSON(&b, d); err != nil {
		t.Fatal(err)
	}
	var raw struct {
		Groups []struct {
			Profile map[string]json.RawMessage `json:"profile"`
		} `json:"groups"`
	}
	if err := json.Unmarshal(b.Bytes(), &raw); err != nil {
		t.Fatal(err)
	}
	number := regexp.MustCompile(`-?[0-9]+(\.[0-9]+)?(e[-+]?[0-9]+)?`)
	places := map[string]int{"positions_m": 3, "offset_m": 3, "measured_nt": 2, "predicted_nt": 2}
	for _, g := range raw.Groups[:3] {
		for key, most := range places {
			for _, n := range number.FindAllString(string(g.Profile[key]), -1) {
				if strings.ContainsAny(n, "e") {
					continue // an exponent form: rounded values print short, checked below
				}
				if k := strings.IndexByte(n, '.'); k >= 0 && len(n)-k-1 > most {
					t.Fatalf("profile %s value %s has more than %d decimals", key, n, most)
				}
			}
		}
	}
	back, err := ReadJSON(bytes.NewReader(b.Bytes()), "results.json")
	if err != nil {
		t.Fatal(err)
	}
	for k := range d.Groups {
		for j, s := range d.Groups[k].Sources {
			if got := back.Groups[k].Sources[j].Current; got != s.Current {
				t.Fatalf("group %s source %d current read back %v, computed %v", d.Groups[k].Key, j, got, s.Current)
			}
		}
	}
}
