package pipeline

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
)

// Merge combines the summaries of shard output folders into one summary in
// out, identical to a single run over the whole folder, and copies the
// shards' per-scan folders into out when it is a different folder.
func Merge(inputs []string, out string) (*Summary, error) {
	if len(inputs) == 0 {
		return nil, errors.New("merge: no input folders")
	}
	outAbs, err := filepath.Abs(out)
	if err != nil {
		return nil, err
	}
	var rows []SummaryRow
	seen := map[string]string{}
	for _, in := range inputs {
		f, err := os.Open(filepath.Join(in, "summary.json"))
		if err != nil {
			return nil, fmt.Errorf("merge: %w", err)
		}
		s, err := ReadSummaryJSON(f, filepath.Join(in, "summary.json"))
		f.Close()
		if err != nil {
			return nil, fmt.Errorf("merge: %w", err)
		}
		inAbs, err := filepath.Abs(in)
		if err != nil {
			return nil, err
		}
		for _, r := range s.Rows {
			if prev, dup := seen[r.Path]; dup {
				return nil, fmt.Errorf("merge: %s appears in both %s and %s (overlapping shards?)", r.Path, prev, in)
			}
			seen[r.Path] = in
			rows = append(rows, r)
			if inAbs != outAbs {
				if err := copyTree(ScanOutDir(inAbs, r.Path), ScanOutDir(outAbs, r.Path)); err != nil {
					return nil, fmt.Errorf("merge: copying %s: %w", r.Path, err)
				}
			}
		}
	}
	s := NewSummary(rows)
	return s, writeSummaryFiles(outAbs, s)
}

// copyTree copies the regular files of src into dst (atomically each);
// a missing src is not an error (a scan not run has no folder).
func copyTree(src, dst string) error {
	return filepath.WalkDir(src, func(path string, d fs.DirEntry, err error) error {
		if errors.Is(err, fs.ErrNotExist) && path == src {
			return nil
		}
		if err != nil {
			return err
		}
		if d.IsDir() || !d.Type().IsRegular() || strings.HasPrefix(d.Name(), ".") {
			return nil
		}
		rel, err := filepath.Rel(src, path)
		if err != nil {
			return err
		}
		in, err := os.Open(path)
		if err != nil {
			return err
		}
		defer in.Close()
		return WriteFileAtomic(filepath.Join(dst, rel), func(w io.Writer) error {
			_, err := io.Copy(w, in)
			return err
		})
	})
}
