package pipeline

import (
	"errors"
	"fmt"
	"os"

	"gapflux/contact"
)

// ConfigError is an error in what the user gave a batch (its folders, its
// job or manifest file, an output folder another batch holds), found before
// any scan was analysed. Commands exit with code 2 on it.
type ConfigError struct{ Err error }

func (e *ConfigError) Error() string { return e.Err.Error() }
func (e *ConfigError) Unwrap() error { return e.Err }

func configf(format string, a ...any) error { return &ConfigError{Err: fmt.Errorf(format, a...)} }

// IsConfigError reports whether err is about the configuration rather than
// a scan: a *ConfigError or a *JobError anywhere in its chain.
func IsConfigError(err error) bool {
	var ce *ConfigError
	var je *JobError
	return errors.As(err, &ce) || errors.As(err, &je)
}

// CheckJob finds the errors of a job that would otherwise show only while a
// scan is analysed: values out of range, unknown materials, an unknown slope
// correlation, a profile file that cannot be opened. name is the job file
// (or a description) the error names.
func CheckJob(job Job, name string) error {
	bad := func(err error) error { return &JobError{Name: name, Msg: err.Error()} }
	if err := job.Validate(); err != nil {
		return bad(err)
	}
	lib, err := job.MaterialLibrary()
	if err != nil {
		return bad(err)
	}
	if _, err := interfaceParams(job, lib); err != nil {
		return bad(err)
	}
	for i, l := range job.Pan.Layers {
		if _, err := contact.LookupMaterial(lib, l.Material); err != nil {
			return bad(fmt.Errorf("pan.layers[%d]: %w", i, err))
		}
	}
	for _, p := range job.files() {
		if *p == "" {
			continue
		}
		f, err := os.Open(*p)
		if err != nil {
			return bad(fmt.Errorf("profile file: %w", err))
		}
		f.Close()
	}
	return nil
}
