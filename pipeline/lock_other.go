//go:build !(linux || darwin || freebsd || netbsd || openbsd || dragonfly)

package pipeline

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
)

// tryLock creates the lock file with O_EXCL. Without flock a lock left by a
// killed process cannot be told from a live one: it is reported as held.
func tryLock(path, dir string) (l *OutputLock, retry bool, err error) {
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o644)
	if errors.Is(err, fs.ErrExist) {
		owner := LockOwner{}
		if g, err := os.Open(path); err == nil {
			owner = readLockOwner(g)
			g.Close()
		}
		return nil, false, &LockedError{Dir: dir, Owner: owner}
	}
	if err != nil {
		return nil, false, fmt.Errorf("locking %s: %w", dir, err)
	}
	return &OutputLock{f: f, path: path}, false, nil
}
