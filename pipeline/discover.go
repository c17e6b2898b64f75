package pipeline

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// scanExtensions are the file name endings batch treats as scans.
var scanExtensions = []string{".stl", ".ply", ".xyz", ".csv", ".txt", ".asc"}

// IsScanName reports whether a file name looks like a supported scan,
// optionally gzip-compressed.
func IsScanName(name string) bool {
	lower := strings.ToLower(name)
	lower = strings.TrimSuffix(lower, ".gz")
	if strings.HasPrefix(filepath.Base(lower), ".") {
		return false
	}
	for _, ext := range scanExtensions {
		if strings.HasSuffix(lower, ext) {
			return true
		}
	}
	return false
}

// ManifestName is the per-folder manifest a batch reads for per-scan
// settings; JobName is the job file a batch picks up from the scan folder.
const (
	ManifestName = "manifest.csv"
	JobName      = "job.toml"
)

// reservedNames are never scans even when their extension matches.
var reservedNames = map[string]bool{ManifestName: true}

// DiscoveryEntry is one item of a batch folder: a scan to analyse or, when
// Problem is set, something the batch lists as a failed row without
// analysing it (a scan whose manifest row is bad, a folder it cannot list, a
// symbolic link out of the folder, a name that is not UTF-8).
type DiscoveryEntry struct {
	Path    string // slash path relative to the batch folder; a folder ends in "/"
	Problem string // what is wrong and what to do; "" for a scan to analyse
}

// DiscoverScans lists every scan under dir (recursively) and every entry it
// cannot use, sorted by path. It skips hidden files and folders, the paths
// skip reports (e.g. the output folder; called with dir joined to the
// entry's path), the manifest itself and the relative paths in exclude (the
// hob and job files a manifest names).
//
// Symbolic links whose target stays inside dir are followed for scans: a
// link to a scan file is a scan under the link's name. A link to a folder is
// not walked (the folder is listed under its own name, or skipped by the
// rules above; this also rules out loops); a note says so. A link out of
// dir, or one that cannot be resolved (a loop, a missing target), is an
// entry with a problem when its name looks like a scan or it points to a
// folder, and a note otherwise. A name that is not valid UTF-8 is an entry
// with a problem, its path written by EscapeName. A folder that cannot be
// listed is an entry with a problem; the rest goes on. Only a dir that cannot
// be listed at all is an error. notes are lines for the run log.
func DiscoverScans(dir string, skip func(path string) bool, exclude map[string]bool) (entries []DiscoveryEntry, notes []string, err error) {
	return discoverScans(dir, skip, exclude, os.ReadDir)
}

// discoverScans is DiscoverScans with the folder lister given, so that
// tests can refuse a folder even to root.
func discoverScans(dir string, skip func(path string) bool, exclude map[string]bool,
	readDir func(string) ([]fs.DirEntry, error)) (entries []DiscoveryEntry, notes []string, err error) {
	real, err := filepath.EvalSymlinks(dir)
	if err != nil {
		return nil, nil, err
	}
	if _, err := readDir(real); err != nil {
		return nil, nil, err
	}
	w := &walker{root: real, top: dir, skip: skip, exclude: exclude, visited: map[string]string{}, readDir: readDir}
	w.walk(dir, real, "")
	for _, l := range w.links { // after the walk, so that visited is complete
		w.link(l[0], l[1], path.Base(l[1]))
	}
	sort.Slice(w.entries, func(i, j int) bool { return w.entries[i].Path < w.entries[j].Path })
	return w.entries, w.notes, nil
}

// walker holds the state of one DiscoverScans.
type walker struct {
	root    string // the batch folder with symbolic links resolved
	top     string // the batch folder as given
	skip    func(string) bool
	exclude map[string]bool
	visited map[string]string // resolved folder -> the relative path it was walked under
	links   [][2]string       // symbolic links found: on-disk name, relative path
	readDir func(string) ([]fs.DirEntry, error)
	entries []DiscoveryEntry
	notes   []string
}

// walk lists the folder disk (resolved: real) under the relative path rel.
func (w *walker) walk(disk, real, rel string) {
	w.visited[real] = rel
	list, err := w.readDir(disk)
	if err != nil {
		w.problem(rel+"/", "cannot list this folder ("+errReason(err)+"): fix its permissions and run again")
		return
	}
	for _, d := range list {
		name := d.Name()
		p := path.Join(rel, name)
		full := filepath.Join(disk, name)
		if strings.HasPrefix(name, ".") || (w.skip != nil && w.skip(filepath.Join(w.top, filepath.FromSlash(p)))) {
			continue
		}
		if !utf8.ValidString(name) {
			if d.IsDir() || IsScanName(name) {
				w.problem(EscapeName(p)+map[bool]string{true: "/"}[d.IsDir()],
					"name is not valid UTF-8: rename it (the summary writes each bad byte as \\xNN)")
			}
			continue
		}
		switch t := d.Type(); {
		case t&fs.ModeSymlink != 0:
			w.links = append(w.links, [2]string{full, p})
		case d.IsDir():
			w.walk(full, filepath.Join(real, name), p)
		case IsScanName(name) && !t.IsRegular():
			w.problem(p, "not a regular file (a pipe or device): copy the scan into a file")
		case IsScanName(name):
			w.scan(p)
		}
	}
}

// link follows the symbolic link full (relative path p) if it stays inside.
func (w *walker) link(full, p, name string) {
	target, err := filepath.EvalSymlinks(full)
	if err != nil {
		msg := "skipped: symbolic link cannot be resolved (a loop or a missing target)"
		if IsScanName(name) {
			w.problem(p, msg+": fix or remove the link")
		} else {
			w.notes = append(w.notes, p+": "+msg)
		}
		return
	}
	st, err := os.Stat(target)
	if err != nil {
		w.problem(p, "skipped: cannot read the symbolic link's target ("+errReason(err)+")")
		return
	}
	if !isInside(w.root, target) {
		if st.IsDir() {
			w.problem(p+"/", "skipped: symlink points outside the batch folder: copy the folder in or link to one inside")
		} else if IsScanName(name) {
			w.problem(p, "skipped: symlink points outside the batch folder: copy the scan in or link to one inside")
		}
		return
	}
	switch {
	case st.IsDir():
		if prev, seen := w.visited[target]; seen {
			w.notes = append(w.notes, p+"/: symbolic link not followed: its folder is listed as "+prev+"/")
		} else {
			w.notes = append(w.notes, p+"/: symbolic link not followed: it points to a folder the batch skips (hidden or the output folder)")
		}
	case IsScanName(name) && !st.Mode().IsRegular():
		w.problem(p, "not a regular file (a pipe or device): copy the scan into a file")
	case IsScanName(name):
		w.scan(p)
	}
}

func (w *walker) scan(p string) {
	if reservedNames[p] || w.exclude[p] {
		return
	}
	w.entries = append(w.entries, DiscoveryEntry{Path: p})
}

func (w *walker) problem(p, msg string) {
	w.entries = append(w.entries, DiscoveryEntry{Path: p, Problem: msg})
}

// errReason is the reason of a file-system error without the path, which
// the caller names relative to the batch folder.
func errReason(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Shard selects a deterministic slice of a sorted list: item i belongs to
// shard K of N when i mod N == K−1. The zero Shard selects everything.
type Shard struct{ K, N int }

// Enabled reports whether s selects a proper slice.
func (s Shard) Enabled() bool { return s.N > 1 }

// Has reports whether item i of the sorted list belongs to the shard.
func (s Shard) Has(i int) bool { return !s.Enabled() || i%s.N == s.K-1 }

func (s Shard) String() string {
	if s.N == 0 {
		return "all"
	}
	return fmt.Sprintf("%d/%d", s.K, s.N)
}

// ParseShard parses "K/N" with 1 <= K <= N.
func ParseShard(v string) (Shard, error) {
	k, n, ok := strings.Cut(v, "/")
	if !ok {
		return Shard{}, fmt.Errorf("shard %q: want K/N, e.g. 2/8", v)
	}
	ki, err1 := strconv.Atoi(strings.TrimSpace(k))
	ni, err2 := strconv.Atoi(strings.TrimSpace(n))
	if err1 != nil || err2 != nil || ni < 1 || ki < 1 || ki > ni {
		return Shard{}, fmt.Errorf("shard %q: want K/N with 1 <= K <= N", v)
	}
	return Shard{K: ki, N: ni}, nil
}

// ShardFromEnv derives a shard from the job-array variables of common cluster
// schedulers (Slurm, Grid Engine, LSF, PBS Pro with a count). It returns
// ok = false when none is set. getenv is os.Getenv in production.
func ShardFromEnv(getenv func(string) string) (s Shard, source string, ok bool, err error) {
	num := func(name string) (int, bool, error) {
		v := strings.TrimSpace(getenv(name))
		if v == "" {
			return 0, false, nil
		}
		n, err := strconv.Atoi(v)
		if err != nil {
			return 0, false, fmt.Errorf("%s=%q is not an integer", name, v)
		}
		return n, true, nil
	}
	type scheme struct {
		name, id, first, last, count, step string
	}
	schemes := []scheme{
		{name: "Slurm", id: "SLURM_ARRAY_TASK_ID", first: "SLURM_ARRAY_TASK_MIN", last: "SLURM_ARRAY_TASK_MAX", step: "SLURM_ARRAY_TASK_STEP"},
		{name: "Grid Engine", id: "SGE_TASK_ID", first: "SGE_TASK_FIRST", last: "SGE_TASK_LAST", step: "SGE_TASK_STEPSIZE"},
		{name: "LSF", id: "LSB_JOBINDEX", last: "LSB_JOBINDEX_END", step: "LSB_JOBINDEX_STEP"},
		{name: "PBS", id: "PBS_ARRAY_INDEX", count: "GAPFLUX_ARRAY_COUNT"},
	}
	for _, sc := range schemes {
		id, has, err := num(sc.id)
		if err != nil {
			return Shard{}, sc.name, false, err
		}
		if !has {
			continue
		}
		first, hasFirst, err := num(sc.first)
		if err != nil {
			return Shard{}, sc.name, false, err
		}
		if !hasFirst {
			first = 1
			if sc.name == "PBS" {
				first = 0
			}
		}
		step, hasStep, err := num(sc.step)
		if err != nil {
			return Shard{}, sc.name, false, err
		}
		if !hasStep || step < 1 {
			step = 1
		}
		var n int
		if sc.count != "" {
			c, hasCount, err := num(sc.count)
			if err != nil {
				return Shard{}, sc.name, false, err
			}
			if !hasCount {
				return Shard{}, sc.name, false, fmt.Errorf("%s is set but %s (the number of array tasks) is not: set it or pass --shard K/N", sc.id, sc.count)
			}
			n = c
		} else {
			last, hasLast, err := num(sc.last)
			if err != nil {
				return Shard{}, sc.name, false, err
			}
			if !hasLast {
				return Shard{}, sc.name, false, fmt.Errorf("%s is set but %s is not: pass --shard K/N", sc.id, sc.last)
			}
			n = (last-first)/step + 1
		}
		k := (id-first)/step + 1
		if n < 1 || k < 1 || k > n || (id-first)%step != 0 {
			return Shard{}, sc.name, false, fmt.Errorf("%s array index %d does not fit the range (first %d, step %d, %d tasks)", sc.name, id, first, step, n)
		}
		return Shard{K: k, N: n}, sc.name, true, nil
	}
	return Shard{}, "", false, nil
}

// Discovery is what a batch finds in its folder before it runs.
type Discovery struct {
	// Entries are the scans to analyse and the entries with a problem,
	// sorted by path: the list a batch shards, so that each lands in
	// exactly one shard. The batch lists a problem entry as a failed row
	// with Problem as its error, without analysing anything.
	Entries []DiscoveryEntry
	// Manifest holds the usable manifest rows of the scans in Entries.
	Manifest map[string]ManifestRow
	// Notes are lines for the run log: links not followed, and the like.
	Notes []string
}

// Discover reads dir's manifest.csv (when there is one) and lists dir's
// scans with DiscoverScans, leaving out the hob and job files the manifest
// names, the profiles those jobs name, and jobFiles (absolute paths of the
// profiles the batch's own job names; those outside dir are ignored). A bad manifest row fails the scan it names; a row whose path is
// unusable is an entry of its own, "manifest.csv line N"; a row that names
// no scan is an entry with that problem. The error is a *ManifestError when
// the manifest as a whole is unusable (a configuration error), or says that
// dir cannot be listed.
func Discover(dir string, skip func(path string) bool, jobFiles []string) (*Discovery, error) {
	m, err := readManifestFile(dir)
	if err != nil {
		return nil, err
	}
	problems := map[string][]string{} // entry path -> reasons
	var order []string
	addProblem := func(p, msg string) {
		if _, ok := problems[p]; !ok {
			order = append(order, p)
		}
		problems[p] = append(problems[p], msg)
	}
	exclude := map[string]bool{}
	excludeInside(dir, jobFiles, exclude)
	if m != nil {
		checkManifestFiles(dir, m)
		jobs := map[string]bool{} // job files read, once each
		for _, r := range m.Rows {
			for _, f := range []string{r.Hob, r.Job} {
				if f != "" {
					exclude[f] = true
				}
			}
			if r.Job != "" && !jobs[r.Job] {
				jobs[r.Job] = true
				excludeJobFiles(dir, r.Job, exclude)
			}
		}
		for _, pr := range m.Problems {
			p := pr.Path
			if p == "" {
				p = ManifestName + " line " + strconv.Itoa(pr.Line)
			}
			addProblem(p, pr.Err.Error())
		}
	}
	entries, notes, err := DiscoverScans(dir, skip, exclude)
	if err != nil {
		return nil, fmt.Errorf("listing the batch folder %s: %w", dir, err)
	}
	d := &Discovery{Manifest: map[string]ManifestRow{}, Notes: notes}
	listed := map[string]bool{}
	for _, e := range entries {
		listed[e.Path] = true
		if reasons, bad := problems[e.Path]; bad {
			if e.Problem != "" { // a link out of the folder, say, with a bad row too
				reasons = append([]string{e.Problem}, reasons...)
			}
			e.Problem = strings.Join(reasons, "; ")
			delete(problems, e.Path)
		} else if e.Problem == "" && m != nil {
			if r, ok := m.Rows[e.Path]; ok {
				d.Manifest[e.Path] = r
			}
		}
		d.Entries = append(d.Entries, e)
	}
	if m != nil {
		for p, r := range m.Rows {
			if !listed[p] && !exclude[p] {
				addProblem(p, (&ManifestError{Name: ManifestName, Line: r.Line,
					Msg: "names no scan under the batch folder: fix the path or remove the row"}).Error())
			}
		}
	}
	for _, p := range order {
		if reasons, left := problems[p]; left && !listed[p] {
			d.Entries = append(d.Entries, DiscoveryEntry{Path: p, Problem: strings.Join(reasons, "; ")})
		}
	}
	sort.Slice(d.Entries, func(i, j int) bool { return d.Entries[i].Path < d.Entries[j].Path })
	return d, nil
}

// excludeInside adds to exclude the slash-separated path, relative to dir,
// of every file in files (absolute paths) that lies inside dir.
func excludeInside(dir string, files []string, exclude map[string]bool) {
	for _, f := range files {
		if f == "" {
			continue
		}
		absDir, err1 := filepath.Abs(dir)
		absF, err2 := filepath.Abs(f)
		if err1 != nil || err2 != nil {
			continue
		}
		rel, err := filepath.Rel(absDir, absF)
		if err == nil && filepath.IsLocal(rel) {
			exclude[filepath.ToSlash(rel)] = true
		}
	}
}

// excludeJobFiles adds to exclude the profiles named by the job file rel
// (a manifest row's job): a hob profile is a CSV like a scan, and must not
// be listed as one. An unreadable job is left for the row's own analysis
// to report.
func excludeJobFiles(dir, rel string, exclude map[string]bool) {
	p, err := ResolveInside(dir, rel)
	if err != nil {
		return
	}
	job, err := ReadJobFile(p)
	if err != nil {
		return
	}
	excludeInside(dir, job.FilePaths(), exclude)
}

// checkManifestFiles moves to m.Problems every row whose hob or job file is
// missing or reached through a symbolic link out of dir.
func checkManifestFiles(dir string, m *Manifest) {
	var paths []string
	for p := range m.Rows {
		paths = append(paths, p)
	}
	sort.Strings(paths)
	for _, p := range paths {
		r := m.Rows[p]
		for _, f := range []struct{ key, rel string }{{"hob", r.Hob}, {"job", r.Job}} {
			if f.rel == "" {
				continue
			}
			_, err := ResolveInside(dir, f.rel)
			if err == nil {
				continue
			}
			msg := f.key + ": " + err.Error()
			if errors.Is(err, fs.ErrNotExist) {
				msg = f.key + ": no such file in the batch folder: fix the path"
			}
			m.Problems = append(m.Problems, ManifestProblem{Path: p, Line: r.Line,
				Err: &ManifestError{Name: ManifestName, Line: r.Line, Msg: msg}})
			delete(m.Rows, p)
			break
		}
	}
}

// readManifestFile reads dir/manifest.csv if present. A manifest reached
// through a symbolic link out of dir is refused.
func readManifestFile(dir string) (*Manifest, error) {
	p, err := ResolveInside(dir, ManifestName)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, &ManifestError{Name: ManifestName, Msg: err.Error()}
	}
	f, err := os.Open(p)
	if err != nil {
		return nil, &ManifestError{Name: ManifestName, Msg: "cannot open (" + errReason(err) + "): fix its permissions"}
	}
	defer f.Close()
	return ReadManifest(f, ManifestName)
}

// Input returns the identity of the batch's whole input, which every shard's
// summary records so that merge can tell a shard missing or given twice.
func (d *Discovery) Input(s Shard) *SummaryInput {
	paths := make([]string, len(d.Entries))
	for i, e := range d.Entries {
		paths[i] = e.Path
	}
	k, n := s.K, s.N
	if !s.Enabled() {
		k, n = 1, 1
	}
	return &SummaryInput{ShardK: k, ShardN: n, Entries: len(paths), EntriesSHA256: entriesSHA256(paths)}
}

// entriesSHA256 hashes a sorted list of entry paths, each ended by a NUL
// byte (which no file name holds).
func entriesSHA256(sorted []string) string {
	h := sha256.New()
	for _, p := range sorted {
		h.Write([]byte(p))
		h.Write([]byte{0})
	}
	return hex.EncodeToString(h.Sum(nil))
}
