package workflow

import (
	"fmt"
	"runtime/debug"
)

// InputError is an error caused by the user's input: a data file that cannot be read or
// used, options that do not fit the data, a bad job file. Its text is that of Err, which
// names the file (and where known the line or option) itself; File repeats it for callers
// that want it alone, "" when the error concerns no one file.
type InputError struct {
	File string
	Err  error
}

func (e *InputError) Error() string { return e.Err.Error() }
func (e *InputError) Unwrap() error { return e.Err }

// inputError marks err as caused by the input; nil stays nil.
func inputError(file string, err error) error {
	if err == nil {
		return nil
	}
	return &InputError{File: file, Err: err}
}

// inputErrorf formats an InputError concerning no one file.
func inputErrorf(format string, args ...any) error {
	return &InputError{Err: fmt.Errorf(format, args...)}
}

// PanicError is a panic of a task turned into an error by the panic net of RunTasks (and
// of every task a workflow runs): a defect of the program, not of the input.
type PanicError struct {
	Task  string // the name of the task, e.g. a regularizer or an epoch
	Value any    // the value passed to panic
	Stack []byte // the goroutine's stack at the panic
}

func (e *PanicError) Error() string {
	return fmt.Sprintf("internal error in %s: %v", e.Task, e.Value)
}

// Safely calls f and turns a panic inside it into a *PanicError naming task.
func Safely(task string, f func() error) (err error) {
	defer func() {
		if v := recover(); v != nil {
			err = &PanicError{Task: task, Value: v, Stack: debug.Stack()}
		}
	}()
	return f()
}
