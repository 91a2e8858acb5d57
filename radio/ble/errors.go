package ble

import (
	"errors"
	"fmt"
)

// ErrParam is wrapped by every error that reports a bad argument to a
// function of this package: a value outside the range the Bluetooth Core
// Specification allows, a payload too large for its PDU, constraints between
// connection parameters broken, sizes beyond this package's caps. Test with
// errors.Is.
var ErrParam = errors.New("ble: invalid parameter")

// ParamError describes a bad argument: the function, the parameter's name,
// its value and the rule (range) it breaks. It wraps ErrParam and, when the
// failure came from package energy or dist, that error too.
type ParamError struct {
	Func  string // the function or method, e.g. "Advertiser.Timeline"
	Param string // the parameter or field, e.g. "Interval"
	Value any    // the value given
	Rule  string // why it is rejected, e.g. "advInterval must be 20 ms … 10.24 s"
	Cause error  // the underlying error, or nil
}

// Error implements error.
func (e *ParamError) Error() string {
	s := fmt.Sprintf("ble.%s: %s = %v: %s", e.Func, e.Param, e.Value, e.Rule)
	if e.Cause != nil {
		s += ": " + e.Cause.Error()
	}
	return s
}

// Unwrap returns ErrParam and the cause, if any.
func (e *ParamError) Unwrap() []error {
	if e.Cause == nil {
		return []error{ErrParam}
	}
	return []error{ErrParam, e.Cause}
}

func paramErr(fn, param string, value any, rule string) error {
	return &ParamError{Func: fn, Param: param, Value: value, Rule: rule}
}

func causeErr(fn, param string, value any, rule string, cause error) error {
	return &ParamError{Func: fn, Param: param, Value: value, Rule: rule, Cause: cause}
}

// finite reports whether x is neither NaN nor ±Inf.
func finite(x float64) bool { return x-x == 0 }

// onGrid reports whether x is an integer multiple of step within a relative
// 1e-9 of step (values given in seconds carry rounding: 0.0075 is not exactly
// 6 × 0.00125 in binary), and returns that multiple.
func onGrid(x, step float64) (int64, bool) {
	n := x / step
	k := int64(n + 0.5)
	d := n - float64(k)
	return k, d <= 1e-9 && d >= -1e-9
}
