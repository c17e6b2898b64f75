//go:build linux || darwin || freebsd || netbsd || openbsd || dragonfly

package pipeline

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"syscall"
)

// tryLock opens (creating it if needed) and flocks the lock file. retry is
// true when the file vanished or was replaced between open and flock.
func tryLock(path, dir string) (l *OutputLock, retry bool, err error) {
	created := true
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o644)
	if errors.Is(err, fs.ErrExist) {
		created = false
		f, err = os.OpenFile(path, os.O_RDWR, 0)
		if errors.Is(err, fs.ErrNotExist) {
			return nil, true, nil
		}
	}
	if err != nil {
		return nil, false, fmt.Errorf("locking %s: %w", dir, err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		switch {
		case errors.Is(err, syscall.EWOULDBLOCK):
			owner := readLockOwner(f)
			f.Close()
			return nil, false, &LockedError{Dir: dir, Owner: owner}
		case created && (errors.Is(err, syscall.ENOLCK) || errors.Is(err, syscall.ENOTSUP)):
			// A file system without flock: the O_EXCL creation is the lock.
			return &OutputLock{f: f, path: path}, false, nil
		case errors.Is(err, syscall.ENOLCK) || errors.Is(err, syscall.ENOTSUP):
			owner := readLockOwner(f)
			f.Close()
			return nil, false, &LockedError{Dir: dir, Owner: owner}
		}
		f.Close()
		return nil, false, fmt.Errorf("locking %s: %w", path, err)
	}
	// The path must still name the file we locked (see Unlock).
	fi, err1 := f.Stat()
	pi, err2 := os.Stat(path)
	if err1 != nil || err2 != nil || !os.SameFile(fi, pi) {
		f.Close()
		return nil, true, nil
	}
	l = &OutputLock{f: f, path: path}
	if !created {
		if _, err := f.Seek(0, io.SeekStart); err == nil {
			owner := readLockOwner(f)
			l.Stale = &owner
		}
	}
	return l, false, nil
}
