package route

import "fmt"

// checkSigmas refuses a station whose current sigma is zero while its
// current is used for steps (OK and not a dipole). The step tests weigh a
// change in current against the stations' combined sigma; with both sigmas
// zero nothing could be called significant, and a 20% fall between two such
// stations was dropped without a word. Zero is not read as "exact" (every
// change a step) nor as "unknown": the caller gives the fit's one-sigma
// uncertainty, or a floor for values taken from a plan or a meter.
func checkSigmas(s *Station, i int) error {
	if !s.usable() || s.CurrentSigma != 0 {
		return nil
	}
	name := fmt.Sprintf("station %d", i)
	if s.Key != "" {
		name = fmt.Sprintf("station %d (%q)", i, s.Key)
	}
	return fmt.Errorf("route: %s: current sigma is 0: give the current's one-sigma uncertainty (a floor such as the meter's resolution when it is not fitted); with none, no change in current can be tested for a step", name)
}
