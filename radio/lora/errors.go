package lora

import (
	"errors"
	"fmt"
)

// ErrParam is wrapped by every error that reports a bad argument to a
// function of this package: a value out of range, a data rate the region
// lacks, a payload too large for a data rate, a frequency outside every
// sub-band. Test with errors.Is.
var ErrParam = errors.New("lora: invalid parameter")

// ErrLimit is wrapped by errors that report a regulatory or regional limit
// being exceeded by otherwise valid settings, for example a frame longer
// than the US902-928 dwell time. Test with errors.Is.
var ErrLimit = errors.New("lora: regional limit exceeded")

// ParamError describes a bad argument: the function, the parameter's name,
// its value and the rule it breaks. It wraps ErrParam.
type ParamError struct {
	Func  string // the function or method, e.g. "Region.DataRate"
	Param string // the parameter's name, e.g. "dr"
	Value any    // the value given
	Rule  string // why it is rejected, e.g. "EU863-870 has no LoRa data rate 9"
}

// Error implements error.
func (e *ParamError) Error() string {
	return fmt.Sprintf("lora.%s: %s = %v: %s", e.Func, e.Param, e.Value, e.Rule)
}

// Unwrap returns ErrParam.
func (e *ParamError) Unwrap() error { return ErrParam }

func paramErr(fn, param string, value any, rule string) error {
	return &ParamError{Func: fn, Param: param, Value: value, Rule: rule}
}

// LimitError describes a regional limit that a frame or a schedule breaks:
// which limit, the value reached and the bound. It wraps ErrLimit.
type LimitError struct {
	Func  string  // the function or method that checked
	Limit string  // the limit, e.g. "US902-928 dwell time"
	Value float64 // the value reached, in the limit's unit
	Bound float64 // the bound, in the same unit
	Unit  string  // the unit of Value and Bound, e.g. "s"
}

// Error implements error.
func (e *LimitError) Error() string {
	return fmt.Sprintf("lora.%s: %s exceeded: %.6g %s > %.6g %s", e.Func, e.Limit, e.Value, e.Unit, e.Bound, e.Unit)
}

// Unwrap returns ErrLimit.
func (e *LimitError) Unwrap() error { return ErrLimit }

// finite reports whether x is neither NaN nor ±Inf.
func finite(x float64) bool { return x-x == 0 }
