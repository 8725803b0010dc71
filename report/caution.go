package report

// Caution returns the sentence every human-facing report carries: model
// results are estimates, to be checked against measurements, and the
// decisions they feed belong to regulations and licensed practice.
func Caution() string {
	return "Model results are estimates that depend on the inputs; validate them against measurements; local regulations and licensed practice decide."
}
