package pipeline

import (
	"context"
	"errors"
	"io/fs"
)

// IsEnvironmentError reports whether err is about where the batch runs
// rather than about the scan: an interrupt or deadline, a full or read-only
// disk, a quota, an I/O error, missing permission, too many open files, no
// memory. A batch never records such a failure as the scan's result: the
// next run tries the scan again.
func IsEnvironmentError(err error) bool {
	if err == nil {
		return false
	}
	if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) || errors.Is(err, fs.ErrPermission) {
		return true
	}
	for _, e := range environmentErrnos {
		if errors.Is(err, e) {
			return true
		}
	}
	return false
}
