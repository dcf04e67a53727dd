package reports

import "errors"

// ErrResult reports a Result this package cannot render faithfully: a risk
// or split basis it does not know, or a test-set basis without test points.
// The wrapped message names the result.json key and the accepted values.
var ErrResult = errors.New("reports: inconsistent result")
