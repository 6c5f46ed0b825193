package live

// defaultEstimator and defaultCommissioner are used when Config leaves
// them nil; inverse.go sets them to the inverse package's solvers.
var (
	defaultEstimator    NewEstimatorFunc
	defaultCommissioner Commissioner
)
