package ieee802154

import (
	"errors"
	"fmt"
)

// ErrParam is wrapped by every error that reports a bad argument to a
// function of this package: an attribute outside the standard's range, a
// frame longer than aMaxPhyPacketSize, a probability outside [0, 1], a
// current below the sleep current. Test with errors.Is.
var ErrParam = errors.New("ieee802154: invalid parameter")

// ParamError describes a bad argument: the function, the parameter's name
// (the standard's attribute name where it has one), its value and the rule
// it breaks. It wraps ErrParam.
type ParamError struct {
	Func  string // the function or method, e.g. "CSMA.Validate"
	Param string // the parameter's name, e.g. "MaxBE (macMaxBE)"
	Value any    // the value given
	Rule  string // why it is rejected, e.g. "must be 3 … 8"
}

// Error implements error.
func (e *ParamError) Error() string {
	return fmt.Sprintf("ieee802154.%s: %s = %v: %s", e.Func, e.Param, e.Value, e.Rule)
}

// Unwrap returns ErrParam.
func (e *ParamError) Unwrap() error { return ErrParam }

func paramErr(fn, param string, value any, rule string) error {
	return &ParamError{Func: fn, Param: param, Value: value, Rule: rule}
}

// finite reports whether x is neither NaN nor ±Inf.
func finite(x float64) bool { return x-x == 0 }

// probability reports whether p is in [0, 1] (false for NaN).
func probability(p float64) bool { return p >= 0 && p <= 1 }
