package orderstat

import (
	"errors"
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
)

// ErrParam is wrapped by every error that reports a bad argument to a
// function of this package. Such errors also wrap dist.ErrParam, so callers
// that test for either sentinel with errors.Is see them.
var ErrParam = errors.New("orderstat: invalid parameter")

// ErrRange is wrapped when the arguments are valid but the exact method
// would need more memory or time than this package allows (the limits are
// documented on the function that returns it).
var ErrRange = errors.New("orderstat: problem too large for the exact method")

// ParamError describes a bad argument: the function, the parameter's name,
// its value and the rule it breaks. It wraps ErrParam and dist.ErrParam.
type ParamError struct {
	Func  string // the function, e.g. "Max"
	Param string // the parameter's name, e.g. "n"
	Value any    // the value given
	Rule  string // the rule it breaks, e.g. "must be >= 1"
}

// Error implements error.
func (e *ParamError) Error() string {
	return fmt.Sprintf("orderstat.%s: %s = %v: %s", e.Func, e.Param, e.Value, e.Rule)
}

// Unwrap returns ErrParam and dist.ErrParam.
func (e *ParamError) Unwrap() []error { return []error{ErrParam, dist.ErrParam} }

func paramErr(fn, param string, value any, rule string) error {
	return &ParamError{Func: fn, Param: param, Value: value, Rule: rule}
}

func rangeErr(fn, what string) error {
	return fmt.Errorf("orderstat.%s: %s: %w", fn, what, ErrRange)
}
