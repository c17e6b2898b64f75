package pipeline

import (
	"bufio"
	"context"
	"crypto/rand"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"
)

// shardOutput is one input folder of Merge with its summary.
type shardOutput struct {
	dir string // absolute
	arg string // as given, for messages
	sum *Summary
}

// Merge combines the summaries of shard output folders into one summary in
// out, identical to a single run over the whole folder, and copies the
// shards' per-scan folders (laid out by ScanOutDir) into out.
//
// Before writing anything it checks that out is none of the inputs, that
// every summary records the same batch input (SummaryInput) and together
// they hold each shard 1..N exactly once ("shard 2/3 missing"), that their
// rows add up to that input, and that every row's path stays inside its
// folder. Files are read only through an os.Root on each input and written
// only through an os.Root on out, so a symbolic link in a shard cannot make
// merge read or write anywhere else.
func Merge(inputs []string, out string) (*Summary, error) {
	if len(inputs) == 0 {
		return nil, errors.New("merge: no input folders")
	}
	outAbs, err := filepath.Abs(out)
	if err != nil {
		return nil, fmt.Errorf("merge: --out %s: %w", out, err)
	}
	shards, err := readShardOutputs(inputs, outAbs)
	if err != nil {
		return nil, err
	}
	input, err := checkShards(shards)
	if err != nil {
		return nil, err
	}
	rows, err := mergeRows(shards, input)
	if err != nil {
		return nil, err
	}
	if err := os.MkdirAll(outAbs, 0o755); err != nil {
		return nil, fmt.Errorf("merge: --out %s: %w", out, err)
	}
	dst, err := os.OpenRoot(outAbs)
	if err != nil {
		return nil, fmt.Errorf("merge: --out %s: %w", out, err)
	}
	defer dst.Close()
	for _, sh := range shards {
		if err := copyShard(sh, dst, outAbs); err != nil {
			return nil, err
		}
	}
	s := NewSummary(rows)
	s.Input = input
	if err := writeSummaryFiles(outAbs, s); err != nil {
		return s, err
	}
	return s, WriteIndexHTML(context.Background(), outAbs, s, IndexTrend{Note: mergeHistoryNote})
}

// mergeHistoryNote is the merged index's trend section. Merge records no
// history of its own: each shard's batch has already appended its rows, to
// the database its --history named (one shared database for every shard
// holds the whole night) or to its own SHARD/history.sqlite. Appending the
// merged rows again would add nothing to a shared database (rows are keyed
// on path and hashes) and would start a second, partial history beside the
// shards' ones otherwise.
const mergeHistoryNote = "No trend chart for a merge: merge adds nothing to a history database, since each shard's batch already recorded its rows in the database its --history named (by default SHARD/history.sqlite). Give every shard the same --history DB and chart it with gapflux trend --history DB."

// readShardOutputs reads each input's summary.json, refusing an input that
// is the output folder itself.
func readShardOutputs(inputs []string, outAbs string) ([]shardOutput, error) {
	outInfo, outErr := os.Stat(outAbs)
	var shards []shardOutput
	for _, in := range inputs {
		inAbs, err := filepath.Abs(in)
		if err != nil {
			return nil, fmt.Errorf("merge: %s: %w", in, err)
		}
		inInfo, err := os.Stat(inAbs)
		switch {
		case errors.Is(err, fs.ErrNotExist):
			return nil, fmt.Errorf("merge: shard folder %s does not exist: give the --out folders of the shard batches (gapflux batch --shard K/N --out DIR), one per shard", in)
		case err != nil:
			return nil, fmt.Errorf("merge: shard folder %s cannot be read (%v): check its permissions", in, errors.Unwrap(err))
		case !inInfo.IsDir():
			return nil, fmt.Errorf("merge: %s is a file, not a shard's output folder: give the --out folders of the shard batches", in)
		}
		if inAbs == outAbs || (outErr == nil && os.SameFile(inInfo, outInfo)) {
			return nil, fmt.Errorf("merge: --out %s is also an input: give a new folder for the merged output", in)
		}
		name := filepath.Join(in, "summary.json")
		f, err := os.Open(name)
		if errors.Is(err, fs.ErrNotExist) {
			return nil, fmt.Errorf("merge: %s holds no summary.json, so it is not a batch's output folder (or its batch never finished): give the --out folders of the shard batches", in)
		} else if err != nil {
			return nil, fmt.Errorf("merge: %s cannot be read (%v): check its permissions", name, errors.Unwrap(err))
		}
		s, err := ReadSummaryJSON(f, name)
		f.Close()
		if err != nil {
			return nil, fmt.Errorf("merge: %w", err)
		}
		shards = append(shards, shardOutput{dir: inAbs, arg: in, sum: s})
	}
	return shards, nil
}

// checkShards checks that the shards belong to one batch input and hold
// each of its N shards once. It returns the merged input (shard 1 of 1).
func checkShards(shards []shardOutput) (*SummaryInput, error) {
	first := shards[0]
	if first.sum.Input == nil {
		return nil, fmt.Errorf("merge: %s records no shard: it was written by an older gapflux; run that batch again (current scans are not analysed again) and merge its new output", first.arg)
	}
	in0 := *first.sum.Input
	if in0.ShardN < 1 || in0.ShardK < 1 || in0.ShardK > in0.ShardN || in0.Entries < 0 {
		return nil, fmt.Errorf("merge: %s: shard %d/%d is not valid", first.arg, in0.ShardK, in0.ShardN)
	}
	byK := map[int]string{}
	for _, sh := range shards {
		in := sh.sum.Input
		switch {
		case in == nil:
			return nil, fmt.Errorf("merge: %s records no shard: it was written by an older gapflux; run that batch again and merge its new output", sh.arg)
		case in.ShardN != in0.ShardN || in.Entries != in0.Entries || in.EntriesSHA256 != in0.EntriesSHA256:
			return nil, fmt.Errorf("merge: %s and %s come from different batches (other scans or another shard count): merge the shards of one batch", first.arg, sh.arg)
		case in.ShardK < 1 || in.ShardK > in.ShardN:
			return nil, fmt.Errorf("merge: %s: shard %d/%d is not valid", sh.arg, in.ShardK, in.ShardN)
		}
		if prev, dup := byK[in.ShardK]; dup {
			return nil, fmt.Errorf("merge: shard %d/%d given twice (%s and %s)", in.ShardK, in.ShardN, prev, sh.arg)
		}
		byK[in.ShardK] = sh.arg
	}
	var missing []string
	for k := 1; k <= in0.ShardN; k++ {
		if _, ok := byK[k]; !ok {
			missing = append(missing, fmt.Sprintf("%d/%d", k, in0.ShardN))
		}
	}
	if len(missing) > 0 {
		return nil, fmt.Errorf("merge: shard %s missing: add its output folder", strings.Join(missing, ", "))
	}
	return &SummaryInput{ShardK: 1, ShardN: 1, Entries: in0.Entries, EntriesSHA256: in0.EntriesSHA256}, nil
}

// mergeRows joins the shards' rows, refusing a path that leaves its folder
// or appears twice, and checks the rows against the recorded input.
func mergeRows(shards []shardOutput, input *SummaryInput) ([]SummaryRow, error) {
	var rows []SummaryRow
	seen := map[string]string{}
	for _, sh := range shards {
		for i, r := range sh.sum.Rows {
			if _, err := LocalPath(r.Path); err != nil {
				return nil, fmt.Errorf("merge: %s: row %d: %w; the summary was altered or damaged, run that shard again", filepath.Join(sh.arg, "summary.json"), i+1, err)
			}
			if prev, dup := seen[r.Path]; dup {
				return nil, fmt.Errorf("merge: %s appears in both %s and %s (overlapping shards?)", r.Path, prev, sh.arg)
			}
			seen[r.Path] = sh.arg
			rows = append(rows, r)
		}
	}
	paths := make([]string, 0, len(rows))
	for _, r := range rows {
		paths = append(paths, r.Path)
	}
	sort.Strings(paths)
	if len(paths) != input.Entries || entriesSHA256(paths) != input.EntriesSHA256 {
		return nil, fmt.Errorf("merge: the shards hold %d rows, but their batch listed %d entries (or other paths): a summary was altered, or a shard ran on a changed folder; run the shards again", len(paths), input.Entries)
	}
	return rows, nil
}

// copyShard copies the per-scan folders of one shard's rows into dst.
func copyShard(sh shardOutput, dst *os.Root, outAbs string) error {
	src, err := os.OpenRoot(sh.dir)
	if err != nil {
		return fmt.Errorf("merge: %s: %w", sh.arg, err)
	}
	defer src.Close()
	for _, r := range sh.sum.Rows {
		if strings.HasSuffix(r.Path, "/") {
			continue // a folder entry (e.g. one that could not be listed) has no outputs
		}
		sub, err := scanSubdir(sh.dir, r.Path)
		if err != nil {
			return fmt.Errorf("merge: %s: %s: %w", sh.arg, r.Path, err)
		}
		dsub, err := scanSubdir(outAbs, r.Path)
		if err != nil {
			return fmt.Errorf("merge: %s: %w", r.Path, err)
		}
		if err := copyTree(src, dst, sub, dsub); err != nil {
			return fmt.Errorf("merge: copying the outputs of %s from %s: %w", r.Path, sh.arg, err)
		}
	}
	return nil
}

// scanSubdir is ScanOutDir(dir, rel) as a slash path relative to dir,
// refused unless it stays inside dir.
func scanSubdir(dir, rel string) (string, error) {
	sub, err := filepath.Rel(dir, ScanOutDir(dir, rel))
	if err != nil || !filepath.IsLocal(sub) {
		return "", ErrPathNotLocal
	}
	return filepath.ToSlash(sub), nil
}

// copyTree copies the regular files under src's folder sub into dst's
// folder dsub, each atomically; a missing sub is not an error (a scan not run
// has no folder). Hidden files (temporary files) and symbolic links are not
// copied.
func copyTree(src, dst *os.Root, sub, dsub string) error {
	return fs.WalkDir(src.FS(), sub, func(p string, d fs.DirEntry, err error) error {
		if errors.Is(err, fs.ErrNotExist) && p == sub {
			return nil
		}
		if err != nil {
			return err
		}
		if d.IsDir() || !d.Type().IsRegular() || strings.HasPrefix(d.Name(), ".") {
			return nil
		}
		in, err := src.Open(p)
		if err != nil {
			return err
		}
		defer in.Close()
		return writeInRoot(dst, path.Join(dsub, strings.TrimPrefix(p, sub)), in)
	})
}

// writeInRoot writes r to name inside root through a temporary file that is
// synced and renamed, so a reader never sees a partial file.
func writeInRoot(root *os.Root, name string, r io.Reader) (err error) {
	dir := path.Dir(name)
	if err := root.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	tmp := path.Join(dir, "."+path.Base(name)+".tmp"+rand.Text()[:10])
	f, err := root.OpenFile(tmp, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			f.Close()
			root.Remove(tmp)
		}
	}()
	bw := bufio.NewWriterSize(f, 1<<16)
	if _, err = io.Copy(bw, r); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return err
	}
	if err = f.Sync(); err != nil {
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	return root.Rename(tmp, name)
}
