package route

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// Fixtures: the stations that locate fed to Build for the invented Corran
// Leys tee as testdata/scenarios/open/tee.toml now describes it (a 40 A DC
// feeder 0.9 m down along east; at east 30 m a 15 A branch leaves at 45
// degrees, so 25 A carry on; traverses 14 m long every 4 m from east 4,
// sensors 0.3 m up; 2 nT of sensor noise), simulated with seeds 2, 14 and
// 21, with each group's noise measured from the second differences of its
// readings (cmd/undercurrent dcnoise.go) and SigmasPerMisfit as package
// report sets it. Depths are below ground. The tee lies at chainage 26 m,
// between T07 and T08. T08-T10 fit the branch as a second line (not
// listed); past T10 the branch lies beyond the traverses' ends, and the
// one-line fits of T11-T15 read 0.3-1.6 A low with misfits of 9-47 nT RMS
// against about 2.6 nT measured; the survey's median noise estimate, the
// poor-fit yardstick, is 6.4 nT, so T14 and T15 pass it.

func teeMisfitSeed2() []Station {
	return []Station{
		{Key: "T01", Point: [3]float64{3.999955789589441, 2.4547056272142057e-05, -0.900349872455431}, Dir: [3]float64{0.9999999938829635, -0.0001042946469914836, -3.6833402851694004e-05}, Current: 40.01668840474591, CurrentSigma: 0.0040415312696495675, Depth: 0.900349872455431, DepthSigma: 0.0001418956074861239, RMS: 1.950976707878893, Chi2: 39.231688029041706, DOF: 415, Noise: 2.7061280661464955, SigmasPerMisfit: 10.441718091863086, OK: true},
		{Key: "T02", Point: [3]float64{8.000023346000283, 0.00019277649949376867, -0.9005992133647888}, Dir: [3]float64{0.9999999986310742, -4.858019718175495e-05, 1.9437489939022448e-05}, Current: 40.021824494716164, CurrentSigma: 0.004048846662385585, Depth: 0.9005992133647888, DepthSigma: 0.000142158244065303, RMS: 1.95413933807343, Chi2: 39.35898415387451, DOF: 415, Noise: 2.6326353313154374, SigmasPerMisfit: 10.42481894231049, OK: true},
		{Key: "T03", Point: [3]float64{11.999814552356943, 2.9155140981924517e-05, -0.9007843879435672}, Dir: [3]float64{0.9999999823331778, 0.00010715932203464039, -0.00015443614806970874}, Current: 40.0276200362879, CurrentSigma: 0.0041915872373010634, Depth: 0.9007843879435672, DepthSigma: 0.00014716715179834074, RMS: 2.022748349721787, Chi2: 42.17125610429736, DOF: 415, Noise: 2.680793346726535, SigmasPerMisfit: 10.071222547415163, OK: true},
		{Key: "T04", Point: [3]float64{15.99986081214426, 1.2083662987438267e-05, -0.9009980357999274}, Dir: [3]float64{0.9999999667130943, 0.00023052775863958131, -0.00011589116829400955}, Current: 40.04335978885286, CurrentSigma: 0.0049591168505003225, Depth: 0.9009980357999274, DepthSigma: 0.00017407198793516812, RMS: 2.392750913718634, Chi2: 59.01029795165223, DOF: 415, Noise: 2.767405988402348, SigmasPerMisfit: 8.51386104197636, OK: true},
		{Key: "T05", Point: [3]float64{19.999525594674076, -0.00014831131484831052, -0.9017946120196169}, Dir: [3]float64{0.9999999164849569, 0.00010580297181169454, -0.0003947604468651251}, Current: 40.07338787924829, CurrentSigma: 0.00567362590686571, Depth: 0.9017946120196169, DepthSigma: 0.0001991104936472255, RMS: 2.735849211860194, Chi2: 77.14666215639657, DOF: 415, Noise: 2.5076500678929516, SigmasPerMisfit: 7.446151892856803, OK: true},
		{Key: "T06", Point: [3]float64{23.99867779784167, -0.00016990984457776072, -0.9038087491637753}, Dir: [3]float64{0.9999984424779932, 0.0013813929351011948, -0.001098542282692873}, Current: 40.16345995168879, CurrentSigma: 0.013179164497501002, Depth: 0.9038087491637753, DepthSigma: 0.0004621022918942898, RMS: 6.345379999458406, Chi2: 415.0, DOF: 415, Noise: 2.6603110013580213, SigmasPerMisfit: 3.2104537142302214, OK: true},
		{Key: "T07", Point: [3]float64{27.98693616358768, -7.159761678221231e-05, -0.9135164611162523}, Dir: [3]float64{0.9997612256416908, 0.019016618466135723, -0.010763824856329316}, Current: 40.55483581820762, CurrentSigma: 0.06614317605624363, Depth: 0.9135164611162523, DepthSigma: 0.002311717643039208, RMS: 31.60809918041179, Chi2: 10297.447460766005, DOF: 415, Noise: 2.831936396741405, SigmasPerMisfit: 0.644504076983154, OK: true},
		{Key: "T08", Point: [3]float64{31.938660089255727, 0.012442067370360802, -0.9013859606099388}, Dir: [3]float64{0.9986869076881721, -0.00444162942968768, -0.05103657845355218}, Current: 25.45396603115755, CurrentSigma: 0.11489065663283782, Depth: 0.9013859606099388, DepthSigma: 0.003383066422223609, RMS: 18.27921548322018, Chi2: 3443.8793712540287, DOF: 410, Noise: 2.573349280045148, SigmasPerMisfit: 1.1077311687640017, OK: true},
		{Key: "T09", Point: [3]float64{35.996294331179506, -0.00021373465482928933, -0.8973913690318895}, Dir: [3]float64{0.9999948184002175, -0.0008868809099838389, -0.003094610632623845}, Current: 24.927440899779487, CurrentSigma: 0.01113180218226262, Depth: 0.8973913690318895, DepthSigma: 0.0005699836943709468, RMS: 4.491907433129335, Chi2: 207.96699755849244, DOF: 410, Noise: 3.0594707933829457, SigmasPerMisfit: 4.507763579894002, OK: true},
		{Key: "T10", Point: [3]float64{39.999674825525396, -0.00015592086808265137, -0.9002139284639579}, Dir: [3]float64{0.9999999630935229, -2.0275307095748924e-05, -0.0002709277850797489}, Current: 25.009475154474796, CurrentSigma: 0.005645337104454029, Depth: 0.9002139284639579, DepthSigma: 0.0002700081853363661, RMS: 1.963818169607338, Chi2: 39.74983897948601, DOF: 410, Noise: 2.478932455862991, SigmasPerMisfit: 10.310759440302178, OK: true},
		{Key: "T11", Point: [3]float64{43.98885872421104, -0.0021267656596031252, -0.8385707336472223}, Dir: [3]float64{0.9999408792328759, -0.004761396678989078, -0.00977584475369811}, Current: 23.388913038594325, CurrentSigma: 0.09347776583013001, Depth: 0.8385707336472223, DepthSigma: 0.005377454562032641, RMS: 47.31346065828466, Chi2: 23072.903823359145, DOF: 415, Noise: 2.753449755521097, SigmasPerMisfit: 0.43056560446073117, OK: true},
		{Key: "T12", Point: [3]float64{47.99510861798765, -0.001285701754873266, -0.8644510735476701}, Dir: [3]float64{0.9999898059785883, -0.0016609461833218446, -0.0041987136936394685}, Current: 24.057219442902664, CurrentSigma: 0.05262666057603837, Depth: 0.8644510735476701, DepthSigma: 0.0029981489370108794, RMS: 26.109709026511876, Chi2: 7026.4650416976965, DOF: 415, Noise: 2.7102658345663353, SigmasPerMisfit: 0.7802288706771113, OK: true},
		{Key: "T13", Point: [3]float64{51.997531006664495, -0.0006403777078526242, -0.8764659887897014}, Dir: [3]float64{0.9999975498811359, -0.000705352525228851, -0.002098263458241536}, Current: 24.376556880364117, CurrentSigma: 0.03433134480701483, Depth: 0.8764659887897014, DepthSigma: 0.0019465255383113171, RMS: 16.876698587020368, Chi2: 2935.673916502402, DOF: 415, Noise: 2.808499713957298, SigmasPerMisfit: 1.2070813899070756, OK: true},
		{Key: "T14", Point: [3]float64{55.99833979904521, -0.00029817424536592756, -0.8835140439536995}, Dir: [3]float64{0.999999010990772, -0.00010159967902642974, -0.001402745516121608}, Current: 24.557925771946284, CurrentSigma: 0.02473938643277052, Depth: 0.8835140439536995, DepthSigma: 0.0013991320691375234, RMS: 12.096188051063866, Chi2: 1508.0991172591455, DOF: 415, Noise: 2.636392571708572, SigmasPerMisfit: 1.684129636664472, OK: true},
		{Key: "T15", Point: [3]float64{59.998835628800954, -0.00042204831197220226, -0.8872902620527071}, Dir: [3]float64{0.9999994953014063, -0.00021859785535934085, -0.0009806181266250132}, Current: 24.666015601338874, CurrentSigma: 0.01814735913541199, Depth: 0.8872902620527071, DepthSigma: 0.001024484508410373, RMS: 8.847566890396777, Chi2: 806.8272084853988, DOF: 415, Noise: 2.5238206256516915, SigmasPerMisfit: 2.3025029411842923, OK: true},
	}
}

func teeMisfitSeed14() []Station {
	return []Station{
		{Key: "T01", Point: [3]float64{3.999874998862265, 0.000126140971518293, -0.9002169584118696}, Dir: [3]float64{0.9999999453298907, -0.00031382539105738336, -0.00010418176169283897}, Current: 40.009271837267164, CurrentSigma: 0.004188082911582569, Depth: 0.9002169584118696, DepthSigma: 0.00014705493434031476, RMS: 2.021925146514308, Chi2: 42.73889876801739, DOF: 415, Noise: 2.4380484891466057, SigmasPerMisfit: 10.07532292804323, OK: true},
		{Key: "T02", Point: [3]float64{8.0000213279009, -2.1361133180904355e-05, -0.900262557139988}, Dir: [3]float64{0.9999999992604144, -3.410864115498088e-05, 1.776996987540341e-05}, Current: 40.01164451846431, CurrentSigma: 0.00411538763955832, Depth: 0.900262557139988, DepthSigma: 0.0001444983110943128, RMS: 1.9867608073071787, Chi2: 41.26523747805973, DOF: 415, Noise: 2.3128159356405558, SigmasPerMisfit: 10.253649413929468, OK: true},
		{Key: "T03", Point: [3]float64{11.999984744046367, -2.8266846415845497e-05, -0.9004861198550791}, Dir: [3]float64{0.9999999997575765, 1.798163711672008e-05, -1.2708570020953937e-05}, Current: 40.01955204761866, CurrentSigma: 0.004240675366418144, Depth: 0.9004861198550791, DepthSigma: 0.00014889053656652704, RMS: 2.046898892960397, Chi2: 43.801195358045014, DOF: 415, Noise: 2.5215399212627467, SigmasPerMisfit: 9.952396211421908, OK: true},
		{Key: "T04", Point: [3]float64{15.999768156886784, 2.077121434495566e-05, -0.9008466657009274}, Dir: [3]float64{0.9999999537322436, 0.00023507968666893535, -0.00019306230030825187}, Current: 40.0386818533775, CurrentSigma: 0.004873990562259677, Depth: 0.9008466657009274, DepthSigma: 0.00017108636285469397, RMS: 2.3519471518659696, Chi2: 57.82934834387449, DOF: 415, Noise: 3.0275400762672007, SigmasPerMisfit: 8.661567404395331, OK: true},
		{Key: "T05", Point: [3]float64{19.99973377827738, -0.00010843054416700451, -0.9016085787974741}, Dir: [3]float64{0.9999999407404049, 0.00026348108941646976, -0.0002215782085271896}, Current: 40.066697398311724, CurrentSigma: 0.006155841845156829, Depth: 0.9016085787974741, DepthSigma: 0.0002160422413178338, RMS: 2.968793757975601, Chi2: 92.1410669766219, DOF: 415, Noise: 2.820011623848765, SigmasPerMisfit: 6.861894239953814, OK: true},
		{Key: "T06", Point: [3]float64{23.998408554033897, -0.00026207167113860634, -0.903584282498306}, Dir: [3]float64{0.9999985000576517, 0.0011184292312086206, -0.0013224970704488097}, Current: 40.163710368899444, CurrentSigma: 0.013083804546454301, Depth: 0.903584282498306, DepthSigma: 0.0004586862871486695, RMS: 6.300535429783262, Chi2: 414.99999999999994, DOF: 415, Noise: 2.6628712627639723, SigmasPerMisfit: 3.233304377777944, OK: true},
		{Key: "T07", Point: [3]float64{27.9868832785478, -7.112194489091827e-05, -0.9135793286817749}, Dir: [3]float64{0.9997615786265878, 0.018973622781220053, -0.010806828426004073}, Current: 40.55487231750167, CurrentSigma: 0.06613966242241531, Depth: 0.9135793286817749, DepthSigma: 0.0023116910573522955, RMS: 31.60492992755292, Chi2: 10442.460570847836, DOF: 415, Noise: 2.982794614548572, SigmasPerMisfit: 0.6445687060265757, OK: true},
		{Key: "T08", Point: [3]float64{31.93871420615147, 0.012129852717485292, -0.9011695215260727}, Dir: [3]float64{0.9986875463495014, -0.004686892941389592, -0.05100213525890996}, Current: 25.44198652215746, CurrentSigma: 0.11503453418271192, Depth: 0.9011695215260727, DepthSigma: 0.003384722414282757, RMS: 18.27133767399854, Chi2: 3490.067836164704, DOF: 410, Noise: 2.9045391899950443, SigmasPerMisfit: 1.1082087744528828, OK: true},
		{Key: "T09", Point: [3]float64{35.996560136635175, -0.0001005614095313411, -0.8971153888421485}, Dir: [3]float64{0.999995582286484, -0.0007609695087887815, -0.0028733835321026677}, Current: 24.91680204061588, CurrentSigma: 0.011166370654791535, Depth: 0.8971153888421485, DepthSigma: 0.0005718781674787252, RMS: 4.50633772813808, Chi2: 212.29543436117578, DOF: 410, Noise: 3.0960217966567507, SigmasPerMisfit: 4.493328718991206, OK: true},
		{Key: "T10", Point: [3]float64{39.99965088170726, -9.778162027866142e-06, -0.9004432652384036}, Dir: [3]float64{0.9999999547097156, -7.747297042996363e-05, -0.0002908238394059886}, Current: 25.009560098129548, CurrentSigma: 0.0058787918533198535, Depth: 0.9004432652384036, DepthSigma: 0.00028123916101365556, RMS: 2.044955091439234, Chi2: 43.71804478894665, DOF: 410, Noise: 2.562858408760525, SigmasPerMisfit: 9.90166327665649, OK: true},
		{Key: "T11", Point: [3]float64{43.98870759385981, -0.0022703875665328623, -0.8389394281185462}, Dir: [3]float64{0.9999396809860656, -0.00474654110144308, -0.009904783544219654}, Current: 23.38884644189633, CurrentSigma: 0.09326303409551427, Depth: 0.8389394281185462, DepthSigma: 0.00536654894667264, RMS: 47.191174788178486, Chi2: 23281.703731610454, DOF: 415, Noise: 2.49900785653981, SigmasPerMisfit: 0.4316813234445373, OK: true},
		{Key: "T12", Point: [3]float64{47.98637169815809, -0.24487826915472694, -0.8058464796072538}, Dir: [3]float64{0.9998144240226052, 0.012089543650445107, -0.014998681631069665}, Current: 11.887596314271176, CurrentSigma: 3.6370037040889254, Depth: 0.8058464796072538, DepthSigma: 0.022593427594228443, RMS: 22.715751332985754, Chi2: 5394.452735281933, DOF: 410, Noise: 2.541735964416742, SigmasPerMisfit: 0.8913839755726417, OK: true},
		{Key: "T13", Point: [3]float64{51.99737495161585, -0.0006315162110531095, -0.8765476555545353}, Dir: [3]float64{0.9999973923389847, -0.0004883676441821955, -0.0022308770192491657}, Current: 24.380025546339564, CurrentSigma: 0.03392679762015405, Depth: 0.8765476555545353, DepthSigma: 0.0019234241676427163, RMS: 16.676785555948104, Chi2: 2907.48758595715, DOF: 415, Noise: 2.2435888613675616, SigmasPerMisfit: 1.2215512827169148, OK: true},
		{Key: "T14", Point: [3]float64{55.99822312721533, -0.0005026292076142188, -0.8833564086303033}, Dir: [3]float64{0.9999987518982697, -0.000492110485758445, -0.001501342456836937}, Current: 24.560516738504283, CurrentSigma: 0.024255415418394932, Depth: 0.8833564086303033, DepthSigma: 0.001371467227403603, RMS: 11.860976123085802, Chi2: 1470.7337000232098, DOF: 415, Noise: 2.705574340333491, SigmasPerMisfit: 1.7175271728111017, OK: true},
		{Key: "T15", Point: [3]float64{59.99890485324671, -0.00015080356401038784, -0.8879442338993512}, Dir: [3]float64{0.9999995370676554, -0.00027578931509191716, -0.0009218485388927669}, Current: 24.675746536389337, CurrentSigma: 0.018202801257416468, Depth: 0.8879442338993512, DepthSigma: 0.001027670900075019, RMS: 8.870181656635108, Chi2: 822.5422383643336, DOF: 415, Noise: 2.821479383543409, SigmasPerMisfit: 2.2966326481290325, OK: true},
	}
}

func teeMisfitSeed21() []Station {
	return []Station{
		{Key: "T01", Point: [3]float64{3.99990044291443, 6.827137785011634e-06, -0.9004306947628974}, Dir: [3]float64{0.9999999963488755, 2.0594703847353284e-05, -8.293435434294427e-05}, Current: 40.01486696748672, CurrentSigma: 0.004407624629720885, Depth: 0.9004306947628974, DepthSigma: 0.00015476444348296034, RMS: 2.1275715873016554, Chi2: 46.64925960363023, DOF: 415, Noise: 2.929288359234595, SigmasPerMisfit: 9.575023895341696, OK: true},
		{Key: "T02", Point: [3]float64{7.999940754860474, 3.065809390149274e-05, -0.9002321575182171}, Dir: [3]float64{0.9999999821236579, 0.00018252834349140288, -4.935673663166094e-05}, Current: 40.01012572444795, CurrentSigma: 0.004177691153017804, Depth: 0.9002321575182171, DepthSigma: 0.000146688436952783, RMS: 2.0168850711304684, Chi2: 41.92168150486679, DOF: 415, Noise: 2.552231873251449, SigmasPerMisfit: 10.100500558539355, OK: true},
		{Key: "T03", Point: [3]float64{11.999959130720857, -0.00015017854414424529, -0.9006866190498228}, Dir: [3]float64{0.9999999967573049, 7.298058502747301e-05, -3.404738462116604e-05}, Current: 40.023138246965786, CurrentSigma: 0.0040877731066757406, Depth: 0.9006866190498228, DepthSigma: 0.00014352877997221095, RMS: 1.9727963648164857, Chi2: 40.10891458674867, DOF: 415, Noise: 2.606966642283424, SigmasPerMisfit: 10.326229889093545, OK: true},
		{Key: "T04", Point: [3]float64{15.99988041516288, -0.00018150160554595416, -0.900745161435488}, Dir: [3]float64{0.9999999947528985, 2.3976600637216717e-05, -9.959581110659336e-05}, Current: 40.035328996009284, CurrentSigma: 0.004952428795945706, Depth: 0.900745161435488, DepthSigma: 0.00017384228889744753, RMS: 2.3899811793307513, Chi2: 58.86611213128421, DOF: 415, Noise: 2.803023022505529, SigmasPerMisfit: 8.523727702812877, OK: true},
		{Key: "T05", Point: [3]float64{19.999824647912135, 2.0156206999387366e-05, -0.9018197104891555}, Dir: [3]float64{0.9999999578869387, 0.0002508763432457782, -0.00014590127140828055}, Current: 40.07582949424089, CurrentSigma: 0.005930965514266973, Depth: 0.9018197104891555, DepthSigma: 0.0002081324335102956, RMS: 2.8598854221803616, Chi2: 84.28953528125406, DOF: 415, Noise: 2.380265627001919, SigmasPerMisfit: 7.12320452751984, OK: true},
		{Key: "T06", Point: [3]float64{23.998463333580947, -0.000271901137568318, -0.9037829324402892}, Dir: [3]float64{0.9999985679570784, 0.0011108177316087224, -0.0012767802314410982}, Current: 40.163666550300434, CurrentSigma: 0.013179763129755882, Depth: 0.9037829324402892, DepthSigma: 0.00046211292390063415, RMS: 6.345792289159268, Chi2: 415.0, DOF: 415, Noise: 2.358021225864804, SigmasPerMisfit: 3.210245129243331, OK: true},
		{Key: "T07", Point: [3]float64{27.98702260160587, -0.00016800256216145968, -0.9134035529506246}, Dir: [3]float64{0.999759452550789, 0.019148146010365286, -0.010695117564214282}, Current: 40.54844793969168, CurrentSigma: 0.06682743055819172, Depth: 0.9134035529506246, DepthSigma: 0.002335821029627538, RMS: 31.937765140367727, Chi2: 10512.00205814244, DOF: 415, Noise: 2.6084793348949713, SigmasPerMisfit: 0.6378514181543267, OK: true},
		{Key: "T08", Point: [3]float64{31.93875952767688, 0.012109927714091799, -0.9014871408669134}, Dir: [3]float64{0.9986932318563805, -0.004056151492282554, -0.050944835649254956}, Current: 25.461248579498776, CurrentSigma: 0.11641162902975566, Depth: 0.9014871408669134, DepthSigma: 0.003426835273889893, RMS: 18.51883422228618, Chi2: 3534.3021862655523, DOF: 410, Noise: 2.7455799364262474, SigmasPerMisfit: 1.093398023237824, OK: true},
		{Key: "T09", Point: [3]float64{35.996278158959136, -9.401966864174013e-05, -0.8972964950648677}, Dir: [3]float64{0.9999949724021454, -0.0006265525956116616, -0.0031084726598780356}, Current: 24.925432109759218, CurrentSigma: 0.011061113944776933, Depth: 0.8972964950648677, DepthSigma: 0.000566389312763666, RMS: 4.463959633608148, Chi2: 205.36049803259726, DOF: 410, Noise: 3.0442274664613738, SigmasPerMisfit: 4.535985625602528, OK: true},
		{Key: "T10", Point: [3]float64{39.999802422350974, -8.41692406717052e-05, -0.8999723665090917}, Dir: [3]float64{0.9999999760733497, -0.0001440361142705833, -0.00016464172543014397}, Current: 24.99993281079498, CurrentSigma: 0.00600167727071721, Depth: 0.8999723665090917, DepthSigma: 0.0002870798291649358, RMS: 2.08754038243405, Chi2: 44.910321319728006, DOF: 410, Noise: 2.629240784744209, SigmasPerMisfit: 9.699671873032838, OK: true},
		{Key: "T11", Point: [3]float64{43.98857619882278, -0.0022885610622050603, -0.8390659010690501}, Dir: [3]float64{0.9999381340191336, -0.004832437837061539, -0.010018766335447717}, Current: 23.392278739027255, CurrentSigma: 0.09293920193442773, Depth: 0.8390659010690501, DepthSigma: 0.0053476196426517275, RMS: 47.02262449027517, Chi2: 22787.15577482089, DOF: 415, Noise: 2.4337820439406914, SigmasPerMisfit: 0.43322866403759347, OK: true},
		{Key: "T12", Point: [3]float64{47.995150083064104, -0.001135289813924223, -0.8642615787973766}, Dir: [3]float64{0.9999894879450779, -0.0019202197633041269, -0.004163742955746952}, Current: 24.060948010180564, CurrentSigma: 0.05284672880634389, Depth: 0.8642615787973766, DepthSigma: 0.0030098176216546563, RMS: 26.222708685197606, Chi2: 7086.495113782875, DOF: 415, Noise: 2.467063001355757, SigmasPerMisfit: 0.7768666857426066, OK: true},
		{Key: "T13", Point: [3]float64{51.99727457330618, -0.0004621013103776713, -0.876974747339721}, Dir: [3]float64{0.9999970811184186, -0.0006906112786229807, -0.002315342459477166}, Current: 24.38298266250318, CurrentSigma: 0.03436900840370072, Depth: 0.876974747339721, DepthSigma: 0.0019488365366065448, RMS: 16.888633274650626, Chi2: 2939.445431025118, DOF: 415, Noise: 2.9124140798002123, SigmasPerMisfit: 1.2062283819046842, OK: true},
		{Key: "T14", Point: [3]float64{55.998390937671594, -0.0005156202999419631, -0.883637250997663}, Dir: [3]float64{0.9999990445168885, -0.0002514735303345234, -0.0013593109922462837}, Current: 24.561221070236503, CurrentSigma: 0.02422387797906822, Depth: 0.883637250997663, DepthSigma: 0.0013699101926941998, RMS: 11.843020843641773, Chi2: 1445.4443593901287, DOF: 415, Noise: 2.3831341852018384, SigmasPerMisfit: 1.7201311267133708, OK: true},
		{Key: "T15", Point: [3]float64{59.99900289374353, -0.0002570484003669164, -0.8875385012700169}, Dir: [3]float64{0.9999995157670589, -0.0005134740588032208, -0.0008395296530476733}, Current: 24.673571363951034, CurrentSigma: 0.018125049301431773, Depth: 0.8875385012700169, DepthSigma: 0.0010230861708698167, RMS: 8.835020859999108, Chi2: 804.4360964259251, DOF: 415, Noise: 2.384893368333926, SigmasPerMisfit: 2.3057725737464074, OK: true},
	}
}

// teeMisfitSeeds are the fixtures by seed.
var teeMisfitSeeds = []struct {
	name string
	st   func() []Station
}{{"seed 2", teeMisfitSeed2}, {"seed 14", teeMisfitSeed14}, {"seed 21", teeMisfitSeed21}}

// withoutNoise returns st with no measured noise: the route then has only
// the survey's yardstick, as before Station.Noise.
func withoutNoise(st []Station) []Station {
	for i := range st {
		st[i].Noise, st[i].SigmasPerMisfit = 0, 0
	}
	return st
}

// teeT08 is T08's chainage on the fixtures, the first station past the tee.
const teeT08 = 27.9

// TestTeeNoFallPastBranch: by Kirchhoff's current law the 25 A that carry
// on past the tee stay on the feeder (nothing else leaves it), so no
// change of current may be reported wholly past the tee. T11-T15, pulled
// low by the branch's field with misfits of 3.5-19 times the noise their
// readings show, set the level of a false fall of 0.84 ± 0.26 A between
// T10 and T11 (seed 2; seeds 5 and 7 alike) while their misfit passed against the
// survey's median noise estimate, which the tee's own misfits raise to
// 6.4 nT; the fixtures without their measured noise must still show it,
// or they no longer test this.
func TestTeeNoFallPastBranch(t *testing.T) {
	for _, c := range teeMisfitSeeds {
		r, err := Build(c.st(), nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range teeSteps(r) {
			if f.From >= teeT08-0.5 {
				t.Errorf("%s: a change of current reported past the tee, where 25 A flow throughout: %s", c.name, f.Message)
			}
		}
		// T11 reads 1.6 A low: the finding on it says why that is not
		// taken for current leaving (with the route's scatter taken
		// about the tee with T07, T08 and T11-T12 at their misfits'
		// sigmas, 0.03 A where it was 0.16 A, the fall withheld runs
		// from T10 to T12, both poor fits named).
		said := false
		for _, f := range findings(r, KindPoorFit) {
			said = said || strings.Contains(f.Message, "not reported as current leaving or joining") &&
				(strings.Contains(f.Message, "T11 misses the readings") || strings.Contains(f.Message, "T11 and T12 miss the readings"))
		}
		if !said && c.name != "seed 14" {
			t.Errorf("%s: no finding says why the fall into T11 is not reported", c.name)
		}
		if c.name != "seed 2" {
			continue // without the noise: seed 21 happens to show no false fall, seed 14 (T12 split in two lines) neither
		}
		old, err := Build(withoutNoise(c.st()), nil)
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, f := range teeSteps(old) {
			found = found || f.From >= teeT08-0.5 && f.Kind == KindCurrentStep
		}
		if !found {
			t.Errorf("%s: without the measured noise the fixture no longer shows the false fall past the tee", c.name)
		}
	}
}

// TestTeeFallCoversBranch: one fall at the tee, of the branch's 15 A
// (Kirchhoff's current law: 40 A in, 25 A on, 15 A into the branch), with
// a sigma that covers its error and the levels either side within three of
// their sigmas of 40 A and 25 A. The stations beside the branch share the
// bias its field gives them: on seed 14, with no scatter between stations
// to widen the sigmas, the fall read 15.282 ± 0.071 A (4 sigma from 15)
// from levels set by T05 and T09, which read 0.07 A high and 0.08 A low,
// of 40.134 and 24.853 A (4 and 3 sigma from 40 and 25). And the
// finding says which stations' fits the model misses, by how much.
func TestTeeFallCoversBranch(t *testing.T) {
	for _, c := range teeMisfitSeeds {
		r, err := Build(c.st(), nil)
		if err != nil {
			t.Fatal(err)
		}
		big := 0
		for _, f := range teeSteps(r) {
			v := f.Values[0]
			if math.Abs(v.Value) < 5 {
				continue
			}
			big++
			if z := (-v.Value - teeBranch) / v.Sigma; math.Abs(z) > 3 {
				t.Errorf("%s: fall %.4g ± %.2g A, %.1f sigma from the branch's %.0f A: %s", c.name, -v.Value, v.Sigma, z, teeBranch, f.Message)
			}
			if f.From > teeChainage || f.To < teeChainage {
				t.Errorf("%s: fall bracketed %.1f-%.1f m, want it to hold the tee at %.0f m", c.name, f.From, f.To, teeChainage)
			}
			for _, name := range []string{"current before", "current after"} {
				lv, _ := valueNamed(f, name)
				want := map[string]float64{"current before": teeFeeder, "current after": teeFeeder - teeBranch}[name]
				if math.Abs(lv.Value-want) > 3*lv.Sigma {
					t.Errorf("%s: %s %.4g ± %.2g A, want %.0f A within 3 sigma", c.name, name, lv.Value, lv.Sigma, want)
				}
			}
			if !strings.Contains(f.Message, "times the noise measured from them") || !strings.Contains(f.Message, "T08") {
				t.Errorf("%s: the fall does not say that the fits beside the tee miss their readings: %s", c.name, f.Message)
			}
		}
		if big != 1 {
			t.Errorf("%s: %d changes of more than 5 A, want the one at the tee", c.name, big)
		}
	}
}

// TestStrainReference: the yardstick for a strained fit is the route's
// lower quartile of misfit ratios. A sensor's slow wander, which second
// differences do not see, made exact fits miss by 2.3 times the measured
// noise on every traverse (package report, sharedMisfit): no station is
// strained by that alone. Fits that miss by 9 times are, even when they
// are two thirds of the route, where a median would take them for the
// norm.
func TestStrainReference(t *testing.T) {
	mk := func(ratios []float64) []Placed {
		ps := make([]Placed, len(ratios))
		for i, r := range ratios {
			ps[i] = Placed{Station: Station{Key: key(i), OK: true, Current: 10, CurrentSigma: 0.01, RMS: 2 * r, Noise: 2, SigmasPerMisfit: 20}, Chainage: 5 * float64(i)}
		}
		markStrained(ps, nil)
		return ps
	}
	wander := make([]float64, 12)
	for i := range wander {
		wander[i] = 2.3 + 0.01*float64(i%3)
	}
	for _, p := range mk(wander) {
		if p.strained {
			t.Errorf("%s strained at a misfit ratio of %.2f, as every station's", p.Key, misfitRatio(&p))
		}
	}
	mixed := make([]float64, 12)
	for i := range mixed {
		mixed[i] = 1
		if i >= 4 {
			mixed[i] = 9
		}
	}
	for i, p := range mk(mixed) {
		if p.strained != (i >= 4) {
			t.Errorf("%s at a misfit ratio of %.2f: strained %v", p.Key, misfitRatio(&p), p.strained)
		}
		// The shift beyond the reference: 0.01 A times 20 per nT times
		// sqrt(18^2 - 2^2) nT.
		if want := 0.2 * math.Sqrt(18*18-2*2); i >= 4 && math.Abs(p.shift-want) > 1e-9 {
			t.Errorf("%s: shift %.6g A, want %.6g A", p.Key, p.shift, want)
		}
	}
	// The poor-fit check disabled: nothing is strained.
	ps := make([]Placed, 12)
	for i := range ps {
		ps[i] = Placed{Station: Station{OK: true, Current: 10, CurrentSigma: 0.01, RMS: 2 * mixed[i], Noise: 2, SigmasPerMisfit: 20}}
	}
	markStrained(ps, &Settings{MaxReducedChi2: -1})
	for _, p := range ps {
		if p.strained {
			t.Fatal("a station strained with the poor-fit check off")
		}
	}
}

// TestMisfitShiftBound: the shift of a least-squares estimate under a
// model error e is a.e with |a| = sigma_I / sigma, so at most
// sigma_I |e| / sigma (Cauchy-Schwarz; the bias of least squares under a
// misspecified model, Seber and Lee, Linear Regression Analysis, 2nd ed.,
// section 9.2). One line is fitted to a traverse of the tee 14 m past it,
// where the branch, 14 m aside, lies beyond the traverse's end: the error
// of its current must lie within the bound from the known error field (the
// field of the tee less that of an infinite 25 A line), and the shift the
// route takes from the residuals must not understate it by more than half.
func TestMisfitShiftBound(t *testing.T) {
	feeder := inverse.Polyline{Vertices: [][3]float64{{-300, 0, -0.9}, {30, 0, -0.9}, {400, 0, -0.9}}}
	branch := inverse.Polyline{Vertices: [][3]float64{{30, 0, -0.9}, {300, 270, -0.9}}}
	line := inverse.Polyline{Vertices: [][3]float64{{-300, 0, -0.9}, {400, 0, -0.9}}}
	earth := [3]float64{-150, 19200, -45100} // nT, mid-latitude western Europe (common practice)
	rng := rand.New(rand.NewPCG(7, 11))
	const noise = 2.0
	for _, x := range []float64{44, 52, 60} {
		var p inverse.Problem
		var e2 float64
		for k := range 141 {
			r := [3]float64{x, -7 + 0.1*float64(k), 0.3}
			f := feeder.Field(r, []float64{40, 25})
			b := branch.Field(r, []float64{15})
			l := line.Field(r, []float64{25})
			var v [3]float64
			for a := range 3 {
				e := 1e9 * (f[a] + b[a] - l[a])
				e2 += e * e
				v[a] = earth[a] + 1e9*(f[a]+b[a]) + noise*rng.NormFloat64()
			}
			p.Points, p.Fields = append(p.Points, r), append(p.Fields, v)
		}
		ground := 0.0
		res, err := inverse.FitLines(&p, &inverse.Settings{Count: 1, ReferenceZ: &ground})
		if err != nil {
			t.Fatal(err)
		}
		s := res.Sources[0]
		got := math.Abs(math.Abs(s.Current) - 25)
		perNT := s.CurrentSigma / res.Sigma // A per nT of reading error, |a|
		bound := perNT * math.Sqrt(e2)
		spm := math.Sqrt(float64(3*len(p.Points))) / res.Sigma // SigmasPerMisfit, as package report sets it
		shift := s.CurrentSigma * spm * math.Sqrt(math.Max(0, res.RMS*res.RMS-noise*noise))
		t.Logf("east %.0f m: current %.4f A, error %.3f A, bound %.3f A, shift from residuals %.3f A", x, s.Current, got, bound, shift)
		if got > bound+3*s.CurrentSigma {
			t.Errorf("east %.0f m: current off by %.3g A, beyond the bound %.3g A", x, got, bound)
		}
		if shift < 0.5*got {
			t.Errorf("east %.0f m: shift from the residuals %.3g A, under half the error %.3g A", x, shift, got)
		}
	}
}
