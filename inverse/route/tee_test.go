package route

import (
	"math"
	"strings"
	"testing"
)

// Fixtures: the stations that locate fed to Build for the invented Corran
// Leys tee (a 40 A DC feeder 0.9 m down along east; at east 30 m a 15 A
// branch leaves it at 45 degrees, so 25 A carry on; traverses every 4 m
// from east 4, sensors 0.3 m up), simulated with seeds 2 and 21. Chainage
// runs from T01 at east 4, so the tee is at chainage 26 m. T07 was refitted
// with a magnetised object; T08, 2 m past the tee, sees the branch too
// and fits an infinite line with a reduced chi-square of 1310; T11-T13
// absorbed the branch's field as objects.
const (
	teeChainage = 26.0 // m, east 30 less T01's east 4
	teeFeeder   = 40.0 // A before the tee
	teeBranch   = 15.0 // A leaving into the branch
)

func teeSeed2() []Station {
	return []Station{
		{Key: "T01", Point: [3]float64{3.999955789589441, 2.4547056272142057e-05, -0.900349872455431}, Dir: [3]float64{0.9999999938829636, -0.00010429464699148361, -3.683340285169401e-05}, Current: 40.01668840474591, CurrentSigma: 0.0040415312696495675, Depth: 1.2003498724554307, DepthSigma: 0.00014189560748612402, RMS: 1.950976707878893, Chi2: 39.231688029041706, DOF: 415, OK: true},
		{Key: "T02", Point: [3]float64{8.000023346000283, 0.00019277649949376867, -0.9005992133647888}, Dir: [3]float64{0.9999999986310742, -4.858019718175495e-05, 1.9437489939022448e-05}, Current: 40.021824494716164, CurrentSigma: 0.004048846662385585, Depth: 1.2005992133647885, DepthSigma: 0.00014215824406527545, RMS: 1.95413933807343, Chi2: 39.35898415387451, DOF: 415, OK: true},
		{Key: "T03", Point: [3]float64{11.999814552356943, 2.9155140981924517e-05, -0.9007843879435672}, Dir: [3]float64{0.9999999823331778, 0.00010715932203464039, -0.00015443614806970874}, Current: 40.0276200362879, CurrentSigma: 0.0041915872373010634, Depth: 1.200784387943567, DepthSigma: 0.00014716715179823983, RMS: 2.022748349721787, Chi2: 42.17125610429736, DOF: 415, OK: true},
		{Key: "T04", Point: [3]float64{15.99986081214426, 1.2083662987438267e-05, -0.9009980357999274}, Dir: [3]float64{0.9999999667130943, 0.00023052775863958131, -0.00011589116829400955}, Current: 40.04335978885286, CurrentSigma: 0.0049591168505003225, Depth: 1.200998035799927, DepthSigma: 0.0001740719879351125, RMS: 2.392750913718634, Chi2: 59.01029795165223, DOF: 415, OK: true},
		{Key: "T05", Point: [3]float64{19.999525594674076, -0.00014831131484831052, -0.9017946120196169}, Dir: [3]float64{0.9999999164849569, 0.00010580297181169454, -0.0003947604468651251}, Current: 40.07338787924829, CurrentSigma: 0.00567362590686571, Depth: 1.2017946120196166, DepthSigma: 0.0001991104936472255, RMS: 2.735849211860194, Chi2: 77.14666215639657, DOF: 415, OK: true},
		{Key: "T06", Point: [3]float64{23.99867779784167, -0.00016990984457776072, -0.9038087491637753}, Dir: [3]float64{0.9999984424779932, 0.0013813929351011948, -0.001098542282692873}, Current: 40.16345995168879, CurrentSigma: 0.013179164497501002, Depth: 1.203808749163775, DepthSigma: 0.00046210229189468517, RMS: 6.345379999458406, Chi2: 415.0, DOF: 415, OK: true},
		{Key: "T07", Point: [3]float64{27.99525845121994, 0.0013591633230152147, -0.8998342416232479}, Dir: [3]float64{0.9999654694307066, 0.007315014343019183, -0.003943413671940851}, Current: 39.92562566952621, CurrentSigma: 0.012063053063116058, Depth: 1.1998342416232475, DepthSigma: 0.0004243399011228578, RMS: 5.825344540207615, Chi2: 349.76476718624633, DOF: 409, OK: true, Dipole: true},
		{Key: "T08", Point: [3]float64{31.530054643148567, 0.48782154268756345, -1.5885596291058597}, Dir: [3]float64{0.9585945362028359, 0.2190691582220357, -0.1819483967446781}, Current: 49.49554131652296, CurrentSigma: 0.7976720014113425, Depth: 1.8885596291058593, DepthSigma: 0.032430866982241915, RMS: 229.31560497752173, Chi2: 542000.9467012945, DOF: 415, OK: true},
		{Key: "T09", Point: [3]float64{35.996294331179506, -0.00021373465482928933, -0.8973913690318895}, Dir: [3]float64{0.9999948184002175, -0.0008868809099838389, -0.003094610632623845}, Current: 24.927440899779487, CurrentSigma: 0.01113180218226262, Depth: 1.1973913690318891, DepthSigma: 0.0005699836937829493, RMS: 4.491907433129335, Chi2: 207.96699755849244, DOF: 410, OK: true},
		{Key: "T10", Point: [3]float64{39.999674825525396, -0.00015592086808265137, -0.9002139284639579}, Dir: [3]float64{0.999999963093523, -2.0275307095748928e-05, -0.00027092778507974895}, Current: 25.009475154474796, CurrentSigma: 0.005645337104454029, Depth: 1.2002139284639575, DepthSigma: 0.00027000818588908144, RMS: 1.963818169607338, Chi2: 39.74983897948601, DOF: 410, OK: true},
		{Key: "T11", Point: [3]float64{44.00059574979075, 0.00029561493117371705, -0.9010386247372552}, Dir: [3]float64{0.9999998759607575, -4.522130851689161e-05, 0.0004960176438014288}, Current: 25.044222606485064, CurrentSigma: 0.004281359089475245, Depth: 1.2010386247372549, DepthSigma: 0.00024029299994322164, RMS: 2.065672317838018, Chi2: 43.98004658866089, DOF: 409, OK: true, Dipole: true},
		{Key: "T12", Point: [3]float64{48.00022350600009, -0.0001735523027149378, -0.9005169144777185}, Dir: [3]float64{0.9999999660012958, -0.00018255553958327608, 0.0001862011877783556}, Current: 25.01370214226533, CurrentSigma: 0.004246604490276695, Depth: 1.2005169144777181, DepthSigma: 0.0002385487818380485, RMS: 2.049712977229593, Chi2: 43.30309397233615, DOF: 409, OK: true, Dipole: true},
		{Key: "T13", Point: [3]float64{52.000061926051906, -6.252459499130152e-06, -0.9002357968346361}, Dir: [3]float64{0.9999999986251247, 9.365975477519069e-06, 5.159485612862154e-05}, Current: 25.007790730601876, CurrentSigma: 0.004264072046566981, Depth: 1.2002357968346358, DepthSigma: 0.00023954093819611214, RMS: 2.0585819809181816, Chi2: 43.67864527957599, DOF: 409, OK: true, Dipole: true},
		{Key: "T14", Point: [3]float64{55.99833979904521, -0.00029817424536592756, -0.8835140439536995}, Dir: [3]float64{0.9999990109907722, -0.00010159967902642976, -0.0014027455161216083}, Current: 24.557925771946284, CurrentSigma: 0.02473938643277052, Depth: 1.183514043953699, DepthSigma: 0.0013991320691370177, RMS: 12.096188051063866, Chi2: 1508.0991172591455, DOF: 415, OK: true},
		{Key: "T15", Point: [3]float64{59.998835628800954, -0.00042204831197220226, -0.8872902620527071}, Dir: [3]float64{0.9999994953014064, -0.00021859785535934087, -0.0009806181266250134}, Current: 24.666015601338874, CurrentSigma: 0.01814735913541199, Depth: 1.1872902620527068, DepthSigma: 0.0010244845084100196, RMS: 8.847566890396777, Chi2: 806.8272084853988, DOF: 415, OK: true},
	}
}

func teeSeed21() []Station {
	return []Station{
		{Key: "T01", Point: [3]float64{3.99990044291443, 6.827137785011634e-06, -0.9004306947628974}, Dir: [3]float64{0.9999999963488756, 2.0594703847353288e-05, -8.293435434294428e-05}, Current: 40.01486696748672, CurrentSigma: 0.004407624629720885, Depth: 1.200430694762897, DepthSigma: 0.0001547644434829305, RMS: 2.1275715873016554, Chi2: 46.64925960363023, DOF: 415, OK: true},
		{Key: "T02", Point: [3]float64{7.999940754860474, 3.065809390149274e-05, -0.9002321575182171}, Dir: [3]float64{0.999999982123658, 0.0001825283434914029, -4.935673663166095e-05}, Current: 40.01012572444795, CurrentSigma: 0.004177691153017804, Depth: 1.2002321575182167, DepthSigma: 0.00014668843695276525, RMS: 2.0168850711304684, Chi2: 41.92168150486679, DOF: 415, OK: true},
		{Key: "T03", Point: [3]float64{11.999959130720857, -0.00015017854414424529, -0.9006866190498228}, Dir: [3]float64{0.9999999967573049, 7.298058502747301e-05, -3.404738462116604e-05}, Current: 40.023138246965786, CurrentSigma: 0.0040877731066757406, Depth: 1.2006866190498224, DepthSigma: 0.00014352877997224104, RMS: 1.9727963648164857, Chi2: 40.10891458674867, DOF: 415, OK: true},
		{Key: "T04", Point: [3]float64{15.99988041516288, -0.00018150160554595416, -0.900745161435488}, Dir: [3]float64{0.9999999947528986, 2.397660063721672e-05, -9.959581110659337e-05}, Current: 40.035328996009284, CurrentSigma: 0.004952428795945706, Depth: 1.2007451614354876, DepthSigma: 0.0001738422894525121, RMS: 2.3899811793307513, Chi2: 58.86611213128421, DOF: 415, OK: true},
		{Key: "T05", Point: [3]float64{19.999824647912135, 2.0156206999387366e-05, -0.9018197104891555}, Dir: [3]float64{0.9999999578869389, 0.00025087634324577824, -0.00014590127140828057}, Current: 40.07582949424089, CurrentSigma: 0.005930965514266973, Depth: 1.2018197104891553, DepthSigma: 0.00020813243351034907, RMS: 2.8598854221803616, Chi2: 84.28953528125406, DOF: 415, OK: true},
		{Key: "T06", Point: [3]float64{23.998463333580947, -0.000271901137568318, -0.9037829324402892}, Dir: [3]float64{0.9999985679570785, 0.0011108177316087227, -0.0012767802314410984}, Current: 40.163666550300434, CurrentSigma: 0.013179763129755882, Depth: 1.2037829324402889, DepthSigma: 0.0004621129233459927, RMS: 6.345792289159268, Chi2: 415.0, DOF: 415, OK: true},
		{Key: "T07", Point: [3]float64{27.99549893587984, 0.00129717390934031, -0.8993675019146646}, Dir: [3]float64{0.9999642056180608, 0.007587227329123443, -0.0037445245488515622}, Current: 39.90366001921027, CurrentSigma: 0.01233213367868302, Depth: 1.1993675019146643, DepthSigma: 0.0004339061473225028, RMS: 5.957385835796259, Chi2: 365.75295909599896, DOF: 409, OK: true, Dipole: true},
		{Key: "T08", Point: [3]float64{31.52981456984544, 0.48769134234497286, -1.5887075265289252}, Dir: [3]float64{0.9585957498370556, 0.21893221911285368, -0.1821067594260423}, Current: 49.50690079952249, CurrentSigma: 0.7975850857633304, Depth: 1.8887075265289248, DepthSigma: 0.03242209811364075, RMS: 229.26832710796492, Chi2: 541707.0847880053, DOF: 415, OK: true},
		{Key: "T09", Point: [3]float64{35.996278158959136, -9.401966864174013e-05, -0.8972964950648677}, Dir: [3]float64{0.9999949724021455, -0.0006265525956116617, -0.003108472659878036}, Current: 24.925432109759218, CurrentSigma: 0.011061113944776933, Depth: 1.1972964950648675, DepthSigma: 0.000566389312763666, RMS: 4.463959633608148, Chi2: 205.36049803259726, DOF: 410, OK: true},
		{Key: "T10", Point: [3]float64{39.999802422350974, -8.41692406717052e-05, -0.8999723665090917}, Dir: [3]float64{0.9999999760733498, -0.00014403611427058334, -0.000164641725430144}, Current: 24.99993281079498, CurrentSigma: 0.00600167727071721, Depth: 1.1999723665090913, DepthSigma: 0.0002870798291649358, RMS: 2.08754038243405, Chi2: 44.910321319728006, DOF: 410, OK: true},
		{Key: "T11", Point: [3]float64{44.00034093385568, 0.0001236229988871038, -0.9009574877563111}, Dir: [3]float64{0.999999916570366, -0.00029374432689764163, 0.0002838547718438357}, Current: 25.030163052487485, CurrentSigma: 0.004422298474082708, Depth: 1.2009574877563107, DepthSigma: 0.00024832902734343463, RMS: 2.1338038938263626, Chi2: 46.92295973088259, DOF: 409, OK: true, Dipole: true},
		{Key: "T12", Point: [3]float64{48.0003255465843, -6.0897648548247885e-05, -0.9004472153348635}, Dir: [3]float64{0.9999998055621028, -0.0005615314206790008, 0.0002712161874204402}, Current: 25.020709523923955, CurrentSigma: 0.004116489868977169, Depth: 1.200447215334863, DepthSigma: 0.00023116402014625544, RMS: 1.9870149803131965, Chi2: 40.689155298380655, DOF: 409, OK: true, Dipole: true},
		{Key: "T13", Point: [3]float64{51.99727457330618, -0.0004621013103776713, -0.876974747339721}, Dir: [3]float64{0.9999970811184187, -0.0006906112786229809, -0.0023153424594771666}, Current: 24.38298266250318, CurrentSigma: 0.03436900840370072, Depth: 1.1769747473397207, DepthSigma: 0.0019488365366065424, RMS: 16.888633274650626, Chi2: 2939.445431025118, DOF: 415, OK: true},
		{Key: "T14", Point: [3]float64{55.998390937671594, -0.0005156202999419631, -0.883637250997663}, Dir: [3]float64{0.9999990445168885, -0.0002514735303345234, -0.0013593109922462837}, Current: 24.561221070236503, CurrentSigma: 0.02422387797906822, Depth: 1.1836372509976627, DepthSigma: 0.0013699101921389855, RMS: 11.843020843641773, Chi2: 1445.4443593901287, DOF: 415, OK: true},
		{Key: "T15", Point: [3]float64{59.99900289374353, -0.0002570484003669164, -0.8875385012700169}, Dir: [3]float64{0.9999995157670591, -0.000513474058803221, -0.0008395296530476735}, Current: 24.673571363951034, CurrentSigma: 0.018125049301431773, Depth: 1.1875385012700166, DepthSigma: 0.0010230861703150078, RMS: 8.835020859999108, Chi2: 804.4360964259251, DOF: 415, OK: true},
	}
}

// stepFindings returns r's current-step and current-change findings.
func teeSteps(r *Route) []Finding {
	return append(findings(r, KindCurrentStep), findings(r, KindCurrentChange)...)
}

// TestLevelsDeterminedAtTee: upstream of the tee the feeder carries
// 40 A throughout (Kirchhoff's current law: nothing leaves before the
// junction), and its stations read 40.02-40.16 A. A step sized there from
// two levels and a trend that cancel (7342 and -7262 A, a "fall of
// 14603.70 ± 0.26 A" between T02 and T03) is wrong on both counts: no
// current leaves there, and a difference of two levels each ± 1404 A
// cannot be known to ± 0.26 A. Every step's levels must lie among the
// currents the stations read, within a few of the levels' own sigmas.
func TestLevelsDeterminedAtTee(t *testing.T) {
	for _, c := range []struct {
		name string
		st   []Station
	}{{"seed 2", teeSeed2()}, {"seed 21", teeSeed21()}} {
		r, err := Build(c.st, &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, p := range usable(r.Stations) {
			lo, hi = math.Min(lo, p.Current), math.Max(hi, p.Current)
		}
		for _, f := range teeSteps(r) {
			if f.To < teeChainage-2 {
				t.Errorf("%s: a change of current reported wholly before the tee (chainage %.0f m), where 40 A flow throughout: %s", c.name, teeChainage, f.Message)
			}
			for _, name := range []string{"current before", "current after"} {
				v, ok := valueNamed(f, name)
				if !ok {
					t.Fatalf("%s: no %q in %v", c.name, name, f.Values)
				}
				if v.Value < lo-5*v.Sigma || v.Value > hi+5*v.Sigma {
					t.Errorf("%s: %s %.6g ± %.3g A lies outside the stations' currents %.4g..%.4g A: %s", c.name, name, v.Value, v.Sigma, lo, hi, f.Message)
				}
			}
		}
	}
}

// TestPoorStationSetsNoLevel: T08, the fit 2 m past the tee with a
// reduced chi-square of 1310, read 49.5 A, more than either side carries.
// It was the only "after" level of a rise of 19.0 A into it and the only
// "before" level of a fall of 24.54 ± 0.80 A out of it. By Kirchhoff's
// current law the feeder loses the branch's 15 A at the tee and gains
// nothing: one fall of about 15 A across T08, none larger, no rise. The
// stations beside the tee read a few tenths of an ampere off (the branch's
// field, which one straight line cannot fit), so the size is checked to
// 4% of the 15 A rather than to its sigma.
func TestPoorStationSetsNoLevel(t *testing.T) {
	for _, c := range []struct {
		name string
		st   []Station
	}{{"seed 2", teeSeed2()}, {"seed 21", teeSeed21()}} {
		r, err := Build(c.st, &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		big := 0
		for _, f := range teeSteps(r) {
			v := f.Values[0]
			if v.Value > 0 && math.Abs(v.Value) > 1 {
				t.Errorf("%s: a rise at a tee, where current only leaves: %s", c.name, f.Message)
			}
			if math.Abs(v.Value) < 5 {
				continue
			}
			big++
			if math.Abs(math.Abs(v.Value)-teeBranch) > 0.04*teeBranch {
				t.Errorf("%s: fall %.4g A, want the branch's %.0f A within 4%%: %s", c.name, -v.Value, teeBranch, f.Message)
			}
			if f.From > teeChainage || f.To < teeChainage {
				t.Errorf("%s: fall bracketed %.1f-%.1f m, want it to hold the tee at %.0f m", c.name, f.From, f.To, teeChainage)
			}
			if !strings.Contains(f.Message, "across T08") {
				t.Errorf("%s: the fall does not say it was measured across the poor fit T08: %s", c.name, f.Message)
			}
			for _, name := range []string{"current before", "current after"} {
				lv, _ := valueNamed(f, name)
				if want := map[string]float64{"current before": teeFeeder, "current after": teeFeeder - teeBranch}[name]; math.Abs(lv.Value-want) > 0.02*want {
					t.Errorf("%s: %s %.4g A, want %.0f A within 2%%", c.name, name, lv.Value, want)
				}
			}
		}
		if big != 1 {
			t.Errorf("%s: %d changes of more than 5 A, want the one at the tee", c.name, big)
		}
	}
}

// TestWideTransitionNotDetermined: the levels fit that gave the
// 14603.70 A "fall" on the seed-2 fixture, T01-T06 with x_f at 5.512 m and
// a transition 442 m wide on stations 4 m apart: f(x) is then linear over
// the stations to a part in 10^4, the two levels and the slope are
// collinear, and the levels carry a variance inflation of millions. It is
// not determined; the same stations with a sharp step are. And whatever
// the fit, the step's sigma is at least what the levels' covariance gives
// (var(a - b) = var a + var b - 2 cov(a, b)).
func TestWideTransitionNotDetermined(t *testing.T) {
	var pts []lvPoint
	for _, s := range teeSeed2()[:6] {
		pts = append(pts, lvPoint{x: 4 * float64(len(pts)), y: s.Current, s: s.CurrentSigma})
	}
	weigh(pts)
	if f := solveLevels(pts, 5.512, 442.1, true); determined(pts, f) {
		t.Errorf("levels %.6g and %.6g A (step variance %.3g) taken as determined", f.c[0], f.c[1], stepVar(&f))
	}
	if f := solveLevels(pts, 5.512, 0, true); !determined(pts, f) {
		t.Errorf("a sharp step between T02 and T03 taken as not determined")
	}
	ps := make([]*Placed, len(teeSeed2()))
	for i, s := range teeSeed2() {
		ps[i] = &Placed{Station: s, Chainage: 4 * float64(i)}
	}
	u := []*Placed{}
	for _, p := range ps {
		if p.usable() {
			u = append(u, p)
		}
	}
	for ia := 0; ia+1 < len(u); ia++ {
		lv := plateau(u, nil, ia, ia+1, 0, len(u)-1)
		if lv.sigma < math.Abs(lv.sigmaBefore-lv.sigmaAfter) {
			t.Errorf("T%02d: step sigma %.3g below |%.3g - %.3g|, less than any correlation of the levels allows", ia+1, lv.sigma, lv.sigmaBefore, lv.sigmaAfter)
		}
		if lv.before < 20 || lv.before > 60 || lv.after < 20 || lv.after > 60 {
			t.Errorf("bracket %s-%s: levels %.6g and %.6g A, outside any current on the route", u[ia].Key, u[ia+1].Key, lv.before, lv.after)
		}
	}
}

// TestFallAtTeeNamesBranch: the 15 A leaving the Corran Leys feeder into
// its branch (both seeds) is a fall whose message names a branch, a tee
// or a bond, beside a loss to earth. Before, a fall named no branch
// ("current leaving the conductor there"), while a rise named "a bond, a
// tee or another source": a fall at a tee read as a coating defect to dig
// for (review rv27b, a 0.3 A service teed off a gas main).
func TestFallAtTeeNamesBranch(t *testing.T) {
	for _, c := range []struct {
		name string
		st   []Station
	}{{"seed 2", teeSeed2()}, {"seed 21", teeSeed21()}} {
		r, err := Build(c.st, &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		falls := 0
		for _, f := range teeSteps(r) {
			if !strings.Contains(f.Message, "current falls") {
				continue
			}
			falls++
			if !strings.Contains(f.Message, "along a branch: a tee or a bond") || !strings.Contains(f.Message, "coating defect") {
				t.Errorf("%s: the fall at the tee names no branch beside a defect: %s", c.name, f.Message)
			}
		}
		if falls == 0 {
			t.Errorf("%s: no fall found at the tee", c.name)
		}
	}
}
