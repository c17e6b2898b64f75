package pipeline

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"
)

// LockName is the lock file a batch holds in its output folder while it
// runs, so two batches never write one folder at once.
const LockName = ".gapflux.lock"

// LockOwner is what a lock file says about the process holding it.
type LockOwner struct {
	PID     int
	Host    string
	Started string // RFC 3339
}

func (o LockOwner) String() string {
	s := "batch pid " + strconv.Itoa(o.PID)
	if o.Host != "" {
		s += " on " + o.Host
	}
	if o.Started != "" {
		s += " (started " + o.Started + ")"
	}
	return s
}

// LockedError says that another batch holds an output folder's lock.
type LockedError struct {
	Dir   string // the output folder
	Owner LockOwner
}

func (e *LockedError) Error() string {
	lock := filepath.Join(e.Dir, LockName)
	return fmt.Sprintf("%s is in use by %s; wait for it or remove %s if that process is gone", e.Dir, e.Owner, lock)
}

// OutputLock is a held output-folder lock.
type OutputLock struct {
	f    *os.File
	path string
	// Stale is the owner of a lock left behind by a process that no longer
	// holds it (killed, or its machine restarted), which this lock took
	// over; nil when the folder was free.
	Stale *LockOwner
}

// LockOutput takes the lock of output folder dir: it creates dir/.gapflux.lock
// (O_EXCL) holding this process's pid, host and start time, and on Unix holds
// an flock(2) on it. Because the kernel drops an flock when its process dies,
// a lock file whose flock is free was left by a killed batch and is taken
// over (reported in Stale). A lock held by a live process gives a
// *LockedError naming it. Release the lock with Unlock.
func LockOutput(dir string) (*OutputLock, error) {
	path := filepath.Join(dir, LockName)
	host, _ := os.Hostname()
	me := LockOwner{PID: os.Getpid(), Host: host, Started: time.Now().UTC().Format(time.RFC3339)}
	for attempt := 0; attempt < 10; attempt++ {
		l, retry, err := tryLock(path, dir)
		if retry {
			continue // the file was removed or replaced while we opened it
		}
		if err != nil {
			return nil, err
		}
		if err := l.f.Truncate(0); err != nil {
			l.Unlock()
			return nil, fmt.Errorf("writing lock %s: %w", path, err)
		}
		line := fmt.Sprintf("pid=%d\nhost=%s\nstarted=%s\n", me.PID, me.Host, me.Started)
		if _, err := l.f.WriteAt([]byte(line), 0); err != nil {
			l.Unlock()
			return nil, fmt.Errorf("writing lock %s: %w", path, err)
		}
		_ = l.f.Sync()
		return l, nil
	}
	return nil, fmt.Errorf("lock %s keeps changing under us: is another batch starting on %s?", path, dir)
}

// Unlock removes the lock file and releases the lock. It is safe to call
// more than once.
func (l *OutputLock) Unlock() error {
	if l == nil || l.f == nil {
		return nil
	}
	// Remove first, then release: a batch that opened the old file meanwhile
	// finds its path gone after it gets the flock and starts over.
	err := os.Remove(l.path)
	if cerr := l.f.Close(); err == nil {
		err = cerr
	}
	l.f = nil
	return err
}

// readLockOwner parses a lock file's pid=, host= and started= lines; it
// reads at most 4 KiB and ignores what it does not know.
func readLockOwner(r io.Reader) LockOwner {
	var o LockOwner
	sc := bufio.NewScanner(io.LimitReader(r, 4<<10))
	for sc.Scan() {
		k, v, _ := strings.Cut(sc.Text(), "=")
		v = strings.TrimSpace(v)
		switch strings.TrimSpace(k) {
		case "pid":
			o.PID, _ = strconv.Atoi(v)
		case "host":
			o.Host = v
		case "started":
			o.Started = v
		}
	}
	return o
}
