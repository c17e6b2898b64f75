package pipeline

import (
	"bufio"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
)

// TempPrefix starts the name of every temporary file WriteFileAtomic makes.
// A batch removes files named so under its output folder when it starts:
// they are what a killed process (kill -9, power loss) leaves behind.
const TempPrefix = ".gapflux-tmp-"

// WriteFileAtomic writes a file by calling write on a temporary file in the
// same directory (named TempPrefix + the file's name + a random suffix),
// syncing it and renaming it over path, so a reader (or a batch killed
// halfway) never sees a partial file.
func WriteFileAtomic(path string, write func(w io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	f, err := os.CreateTemp(dir, TempPrefix+filepath.Base(path)+"-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	bw := bufio.NewWriterSize(f, 1<<16)
	if err = write(bw); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = f.Sync(); err != nil {
		return fmt.Errorf("syncing %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("closing %s: %w", path, err)
	}
	if err = os.Chmod(tmp, 0o644); err != nil {
		return err
	}
	if err = os.Rename(tmp, path); err != nil {
		return fmt.Errorf("renaming into %s: %w", path, err)
	}
	return nil
}

// WriteBytesAtomic writes b to path atomically.
func WriteBytesAtomic(path string, b []byte) error {
	return WriteFileAtomic(path, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// RemoveTempFiles deletes the regular files under root whose names start
// with TempPrefix, and nothing else: it never follows a symbolic link out of
// root. It returns how many it removed. Call it only while holding root's
// lock (LockOutput), so no running writer loses its temporary file.
func RemoveTempFiles(root string) (int, error) {
	n := 0
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			if path == root {
				return err
			}
			return nil // an unreadable subfolder holds nothing we wrote
		}
		if !d.Type().IsRegular() || !strings.HasPrefix(d.Name(), TempPrefix) {
			return nil
		}
		if err := os.Remove(path); err != nil {
			return err
		}
		n++
		return nil
	})
	return n, err
}
