package simulate

import _ "embed"

// The demo scenario is kept in the repository at DemoPath and copied here
// so that it is bundled into the program; a test checks the two agree.
//go:generate cp ../../testdata/demo/fenwick-lane.toml demo.toml

//go:embed demo.toml
var demoTOML []byte

// DemoPath is where the bundled demo scenario lives in the repository.
const DemoPath = "testdata/demo/fenwick-lane.toml"

// Demo returns the bundled demo scenario: the Fenwick Lane 11 kV cable out
// of Harrow Fen substation (see DemoPath for what it holds).
func Demo() (*Scenario, error) { return Parse(demoTOML, DemoPath) }

// DemoText returns the bundled demo scenario's TOML text.
func DemoText() []byte { return append([]byte(nil), demoTOML...) }
