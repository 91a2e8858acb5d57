package energy

import (
	"errors"
	"fmt"
)

// ErrParam is wrapped by every error that reports a bad description or
// argument to a function of this package. Test with errors.Is.
var ErrParam = errors.New("energy: invalid parameter")

// ParamError describes a bad parameter: the function, the parameter or field
// (prefixed with the state's or stage's name where there is one), its value
// and the rule it breaks. It wraps ErrParam and, when the failure came from a
// law computation in package dist, that error too (so errors.Is(err,
// dist.ErrParam) also holds then).
type ParamError struct {
	Func  string // the function, e.g. "NewState"
	Param string // the parameter or field, e.g. `state "tx": duration`
	Value any    // the value given
	Rule  string // the rule it breaks
	Cause error  // the underlying error, or nil
}

// Error implements error.
func (e *ParamError) Error() string {
	s := fmt.Sprintf("energy.%s: %s = %v: %s", e.Func, e.Param, e.Value, e.Rule)
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
	return &ParamError{Func: fn, Param: param, Value: brief(value), Rule: rule}
}

func causeErr(fn, param string, value any, rule string, cause error) error {
	return &ParamError{Func: fn, Param: param, Value: brief(value), Rule: rule, Cause: cause}
}

// brief shortens long descriptions (of nested stages) to 200 bytes.
func brief(v any) any {
	if s, ok := v.(string); ok && len(s) > 200 {
		return s[:200] + "…"
	}
	return v
}
