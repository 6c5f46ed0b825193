package live_test

import (
	"fmt"

	"undercurrent/report/live"
)

func ExampleParseSite() {
	site, err := live.ParseSite("harrow-fen.toml", []byte(`
name = "Harrow Fen substation"
[[asset]]
name = "fenwick-lane"
mode = "ac"
frequency = 50.0
window = "1s"
  [[asset.sensor]]
  name = "fl-w1"
  position = [-0.5, 0.0, 0.3]
  [[asset.conductor]]
  name = "go"
  point = [-0.15, 0.0, -0.8]
  direction = [0.0, 1.0, 0.0]
`))
	if err != nil {
		fmt.Println(err)
		return
	}
	a := site.Assets[0]
	fmt.Println(a.Name, a.Mode, a.Frequency, a.Window, a.Model, len(a.Sensors), site.Service.HTTP)
	// Output: fenwick-lane ac 50 1s fixed 1 127.0.0.1:8470
}
