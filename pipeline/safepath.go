package pipeline

import (
	"errors"
	"fmt"
	"io/fs"
	"path/filepath"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Errors of LocalPath and ResolveInside. Their text says what is wrong and
// what to do; callers add the file, line and key that gave the path. None of
// them quotes the path, which may come from a hostile file.
var (
	ErrPathEmpty     = errors.New("path is empty")
	ErrPathNUL       = errors.New("path holds a NUL byte")
	ErrPathNotUTF8   = errors.New("path is not valid UTF-8: rename the file and write the path in UTF-8")
	ErrPathNotLocal  = errors.New("path is absolute or climbs out of the folder with ..: give a path relative to the folder, inside it")
	ErrPathBackslash = errors.New(`path uses \ as a separator: write it with /`)
	ErrPathOutside   = errors.New("path leads through a symbolic link to outside the folder: copy the file into the folder or link to a file inside it")
	ErrPathUnresolve = errors.New("path cannot be resolved (a symbolic link loop or a link to a missing file)")
)

// LocalPath checks a slash-separated path read from a file (a manifest cell,
// a summary row) and returns it cleaned. It refuses an empty path, a NUL
// byte, invalid UTF-8, an absolute path and any path that climbs out of its
// folder with "..", following the rules of filepath.IsLocal (which on
// Windows also refuses reserved names such as NUL and COM1).
func LocalPath(p string) (string, error) {
	switch {
	case p == "":
		return "", ErrPathEmpty
	case strings.IndexByte(p, 0) >= 0:
		return "", ErrPathNUL
	case !utf8.ValidString(p):
		return "", ErrPathNotUTF8
	case strings.HasPrefix(p, "/") || !filepath.IsLocal(filepath.FromSlash(p)):
		return "", ErrPathNotLocal
	}
	return filepath.ToSlash(filepath.Clean(filepath.FromSlash(p))), nil
}

// ManifestPath is LocalPath with one more rule for paths a person typed: a
// backslash is refused rather than taken as part of a Unix file name, so that
// a Windows-style `..\x` can never be read two ways.
func ManifestPath(p string) (string, error) {
	if strings.ContainsRune(p, '\\') {
		return "", ErrPathBackslash
	}
	return LocalPath(p)
}

// ResolveInside returns the on-disk name of the slash path rel inside the
// folder root, after checking rel with LocalPath and following every
// symbolic link along it: a link whose target lies outside root gives
// ErrPathOutside, a loop or dangling link ErrPathUnresolve, a missing file an
// error matching fs.ErrNotExist. The name returned is root joined with rel,
// so that messages show the path the user wrote.
//
// Use it for every path a file names relative to a folder: manifest paths
// (root = the batch folder) and a job file's profile keys (root = the job
// file's folder). The check and the later open are two steps; a file swapped
// for a link between them is not caught (os.Root closes that gap where one
// open suffices).
func ResolveInside(root, rel string) (string, error) {
	clean, err := LocalPath(rel)
	if err != nil {
		return "", err
	}
	realRoot, err := filepath.EvalSymlinks(root)
	if err != nil {
		return "", fmt.Errorf("folder %s: %w", root, err)
	}
	full := filepath.Join(root, filepath.FromSlash(clean))
	real, err := filepath.EvalSymlinks(full)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return "", fs.ErrNotExist
		}
		return "", ErrPathUnresolve
	}
	if !isInside(realRoot, real) {
		return "", ErrPathOutside
	}
	return full, nil
}

// isInside reports whether the cleaned absolute-or-relative path p lies in
// or below dir (both already free of symbolic links).
func isInside(dir, p string) bool {
	r, err := filepath.Rel(dir, p)
	return err == nil && (r == "." || filepath.IsLocal(r))
}

// EscapeName returns a file name that is not valid UTF-8 in a form that is:
// every byte of an invalid sequence becomes \xNN and every backslash \\, so
// the result is reversible and the same in CSV and JSON. A valid name is
// returned unchanged.
func EscapeName(name string) string {
	if utf8.ValidString(name) {
		return name
	}
	var b strings.Builder
	for i := 0; i < len(name); {
		r, n := utf8.DecodeRuneInString(name[i:])
		switch {
		case r == utf8.RuneError && n <= 1:
			b.WriteString(`\x`)
			if name[i] < 0x10 {
				b.WriteByte('0')
			}
			b.WriteString(strings.ToUpper(strconv.FormatUint(uint64(name[i]), 16)))
			n = 1
		case r == '\\':
			b.WriteString(`\\`)
		default:
			b.WriteString(name[i : i+n])
		}
		i += n
	}
	return b.String()
}
