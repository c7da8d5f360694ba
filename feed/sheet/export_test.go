package sheet

// The test data of the package's own tests, for the print tests of package sheet_test.
var (
	RegisterLots       = registerLots
	CalibrationOutcome = calibrationOutcome
)
