package html_test

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/emulation"
	cdplog "github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"

	"gapflux/pipeline"
	"gapflux/scan/synth"
)

// chromiumPath finds Debian's chromium (or another Chromium on PATH).
func chromiumPath() string {
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	return ""
}

// browser is a headless Chromium that records console errors, uncaught
// exceptions and every request that is not to a local file or a data: URL.
type browser struct {
	ctx     context.Context
	mu      sync.Mutex
	errs    []string
	remotes []string
}

func newBrowser(t *testing.T) *browser {
	t.Helper()
	path := chromiumPath()
	if path == "" {
		t.Skip("chromium not found on PATH: install it (Debian: apt-get install -y chromium) to run the browser tests")
	}
	opts := []chromedp.ExecAllocatorOption{
		chromedp.ExecPath(path), chromedp.Headless, chromedp.NoSandbox, chromedp.DisableGPU, chromedp.NoFirstRun,
		chromedp.Flag("disable-quic", true), chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true), chromedp.Flag("disable-sync", true),
		chromedp.UserDataDir(t.TempDir()), chromedp.WindowSize(1280, 900),
	}
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	t.Cleanup(cancel)
	actx, cancelA := chromedp.NewExecAllocator(ctx, opts...)
	t.Cleanup(cancelA)
	b := &browser{}
	bctx, cancelB := chromedp.NewContext(actx, chromedp.WithListener(b.listen))
	t.Cleanup(cancelB)
	b.ctx = bctx
	err := chromedp.Do(bctx, chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
		if _, err := cdp.Call(ctx, tg, cdplog.Enable, cdp.Empty{}); err != nil {
			return err
		}
		_, err := cdp.Call(ctx, tg, network.Enable, network.EnableParams{})
		return err
	}))
	if err != nil {
		t.Fatalf("starting %s: %v", path, err)
	}
	return b
}

func (b *browser) listen(ev any) {
	b.mu.Lock()
	defer b.mu.Unlock()
	switch e := ev.(type) {
	case *runtime.EventConsoleAPICalled:
		if e.Type == runtime.ConsoleAPICalledTypeError || e.Type == runtime.ConsoleAPICalledTypeAssert {
			b.errs = append(b.errs, fmt.Sprintf("console.%s", e.Type))
		}
	case *runtime.EventExceptionThrown:
		b.errs = append(b.errs, "exception: "+e.ExceptionDetails.Text)
	case *cdplog.EventEntryAdded:
		if e.Entry.Level == cdplog.EntryLevelError {
			b.errs = append(b.errs, "log: "+e.Entry.Text+" "+e.Entry.URL)
		}
	case *network.EventRequestWillBeSent:
		u := e.Request.URL
		if !strings.HasPrefix(u, "file:") && !strings.HasPrefix(u, "data:") {
			b.remotes = append(b.remotes, u)
		}
	}
}

// open loads a page and fails the test on any console error or request
// leaving the machine.
func (b *browser) open(t *testing.T, path string) {
	t.Helper()
	if err := chromedp.Do(b.ctx, chromedp.Navigate("file://"+path), chromedp.WaitReady("body")); err != nil {
		t.Fatalf("loading %s: %v", path, err)
	}
	time.Sleep(300 * time.Millisecond) // late console messages
	b.mu.Lock()
	defer b.mu.Unlock()
	if len(b.errs) > 0 {
		t.Errorf("%s: console errors: %q", filepath.Base(path), b.errs)
	}
	if len(b.remotes) > 0 {
		t.Errorf("%s: requests to the network: %q", filepath.Base(path), b.remotes)
	}
	b.errs, b.remotes = nil, nil
}

// eval runs a script expression and returns its value.
func eval[T any](t *testing.T, b *browser, expr string) T {
	t.Helper()
	v, err := chromedp.Run(b.ctx, chromedp.Evaluate[T](expr))
	if err != nil {
		t.Fatalf("evaluating %s: %v", expr, err)
	}
	return v
}

// checkImages asserts that every <img> decoded and every picture (img and
// inline svg) is laid out with a non-zero size.
func checkImages(t *testing.T, b *browser, page string, wantAtLeast int) {
	t.Helper()
	bad := eval[[]string](t, b, `Array.from(document.querySelectorAll("img, figure svg")).filter(function (e) {
		var r = e.getBoundingClientRect();
		return r.width < 1 || r.height < 1 || (e.tagName === "IMG" && !(e.complete && e.naturalWidth > 0));
	}).map(function (e) { return e.getAttribute("alt") || e.getAttribute("aria-label") || e.tagName; })`)
	if len(bad) > 0 {
		t.Errorf("%s: pictures not rendered: %q", page, bad)
	}
	if n := eval[int](t, b, `document.querySelectorAll("img, figure svg").length`); n < wantAtLeast {
		t.Errorf("%s: %d pictures, want at least %d", page, n, wantAtLeast)
	}
}

// checkFitsWidth asserts that the page and its table sel fit the window's
// width (1280 px here, a common laptop screen) without a horizontal scroll
// bar: the document's and the table's scrollWidth, and the table's right
// edge, at most the viewport's clientWidth (whole pixels; Chromium rounds
// scrollWidth).
func checkFitsWidth(t *testing.T, b *browser, page, sel string) {
	t.Helper()
	w := eval[[]float64](t, b, `(function () {
		var tab = document.querySelector(`+strconv.Quote(sel)+`);
		return [document.documentElement.clientWidth, document.documentElement.scrollWidth,
			tab.scrollWidth, tab.getBoundingClientRect().right];
	})()`)
	for _, c := range []struct {
		name string
		px   float64
	}{{"page scrollWidth", w[1]}, {"table scrollWidth", w[2]}, {"table right edge", w[3]}} {
		if c.px > w[0]+0.5 {
			t.Errorf("%s: %s %.0f px, wider than the %.0f px viewport (horizontal scroll)", page, c.name, c.px, w[0])
		}
	}
}

// screenshot writes a full-page PNG into dir and checks that it decodes.
func screenshot(t *testing.T, b *browser, dir, name string) {
	t.Helper()
	shot, err := chromedp.Run(b.ctx, chromedp.FullScreenshot(100))
	if err != nil {
		t.Fatalf("screenshot %s: %v", name, err)
	}
	cfg, err := png.DecodeConfig(bytes.NewReader(shot))
	if err != nil || cfg.Width < 100 || cfg.Height < 100 {
		t.Fatalf("screenshot %s: %v, %d×%d px", name, err, cfg.Width, cfg.Height)
	}
	if err := os.WriteFile(filepath.Join(dir, name), shot, 0o644); err != nil {
		t.Fatal(err)
	}
}

// smallBatch writes a batch folder with a dished and a domed base, a base
// written in inches (read as mm, the quality gate rejects it) and a
// truncated STL (it fails), and runs it.
func smallBatch(t *testing.T) (out string, sum *pipeline.Summary) {
	t.Helper()
	dir := t.TempDir()
	base := synth.Spec{Shape: synth.Dish, DiameterM: 0.12, NoiseM: 8e-6, CornerRadiusM: 4e-3, WallHeightM: 10e-3,
		SpacingM: 1.5e-3, Mesh: true, Normals: true, Seed: 7}
	write := func(rel string, spec synth.Spec, enc synth.Encoding) string {
		sc, err := synth.Generate(spec)
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := synth.Encode(&buf, sc, enc); err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, filepath.FromSlash(rel))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	dish, dome, inch := base, base, base
	dish.Name, dish.SagM, dish.Holes = "dish", 0.25e-3, 2
	dome.Name, dome.SagM, dome.Seed = "dome", -0.2e-3, 8
	inch.Name, inch.SagM, inch.Seed = "inches", 0.2e-3, 9
	write("line-a/dish.stl", dish, synth.Encoding{Format: "stl", Binary: true})
	write("line-a/dome.ply", dome, synth.Encoding{Format: "ply", Binary: true})
	write("line-b/in inches.stl", inch, synth.Encoding{Format: "stl", Binary: true, Unit: "in"})
	broken := write("line-b/truncated.stl", dish, synth.Encoding{Format: "stl", Binary: true})
	b, _ := os.ReadFile(broken)
	if err := os.WriteFile(broken, b[:len(b)/2], 0o644); err != nil {
		t.Fatal(err)
	}
	manifest := "path,part_number,lot\nline-a/dish.stl,FP-120,L07\nline-a/dome.ply,FP-120,L08\n"
	if err := os.WriteFile(filepath.Join(dir, "manifest.csv"), []byte(manifest), 0o644); err != nil {
		t.Fatal(err)
	}
	job := pipeline.DefaultJob()
	job.Grid.CellMM = 1
	out = filepath.Join(t.TempDir(), "night-01")
	res, err := pipeline.RunBatch(context.Background(), pipeline.BatchOptions{Dir: dir, Out: out, Job: job, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	return out, res.Summary
}

// checkLossSort clicks the index's loss heading twice and checks that the
// losses read ascending, then descending, with the scans that have none
// last both times; wantLosses is how many scans have a loss.
func checkLossSort(t *testing.T, b *browser, wantLosses int) {
	t.Helper()
	// Sort by loss: ascending, then descending; scans without a loss last.
	lossCol := `Array.from(document.querySelectorAll("#scans thead th")).findIndex(function (h) { return h.dataset.key === "loss"; })`
	readLoss := `Array.from(document.querySelectorAll("#scans tbody tr")).map(function (r) { return r.cells[` + lossCol + `].dataset.sort; })`
	for _, dir := range []string{"ascending", "descending"} {
		if err := chromedp.Do(b.ctx, chromedp.Click(`#scans th[data-key="loss"]`)); err != nil {
			t.Fatal(err)
		}
		got := eval[[]string](t, b, readLoss)
		var nums []float64
		for i, s := range got {
			if s == "" {
				for _, rest := range got[i:] {
					if rest != "" {
						t.Errorf("sort %s: an empty loss before a number: %q", dir, got)
					}
				}
				break
			}
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("loss cell %q: %v", s, err)
			}
			nums = append(nums, v)
		}
		if len(nums) != wantLosses {
			t.Errorf("sort %s: %d losses, want %d (%q)", dir, len(nums), wantLosses, got)
		}
		sorted := sort.SliceIsSorted(nums, func(i, j int) bool { return nums[i] < nums[j] })
		if dir == "descending" {
			sorted = sort.SliceIsSorted(nums, func(i, j int) bool { return nums[i] > nums[j] })
		}
		if !sorted || (len(nums) >= 2 && nums[0] == nums[len(nums)-1]) {
			t.Errorf("sort %s: losses %v", dir, nums)
		}
		if aria := eval[string](t, b, `document.querySelector('#scans th[data-key="loss"]').getAttribute("aria-sort")`); aria != dir {
			t.Errorf("after clicking: aria-sort %q, want %q", aria, dir)
		}
	}
}

// checkTrend checks the index's trend section of smallBatch: one chart,
// of part FP-120, with the batch's two scans as its two points, and the
// baseline window and run rules stated.
func checkTrend(t *testing.T, b *browser) {
	t.Helper()
	parts := eval[[]string](t, b, `Array.from(document.querySelectorAll("#trend figure.chart")).map(function (f) { return f.dataset.part; })`)
	if len(parts) != 1 || parts[0] != "FP-120" {
		t.Fatalf("trend charts of %q, want FP-120", parts)
	}
	if n := eval[int](t, b, `document.querySelectorAll("#trend figure.chart img").length`); n != 1 {
		t.Errorf("trend: %d chart pictures, want 1", n)
	}
	text := eval[string](t, b, `document.getElementById("trend").textContent`)
	for _, want := range []string{"2 points of loss_pct (this batch's: point 1, 2, ringed on the chart)", "first 20 points", "Western Electric rules 1–4", "history.sqlite"} {
		if !strings.Contains(text, want) {
			t.Errorf("trend section lacks %q:\n%s", want, text)
		}
	}
}

// TestDemoPagesInBrowser runs the demo batch and checks its index and
// every scan page in headless Chromium: no console errors or network
// requests, every picture rendered, one row per scan, sorting by loss, each
// page printed on one A4 sheet.
func TestDemoPagesInBrowser(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the demo batch and a browser")
	}
	b := newBrowser(t)
	dir := t.TempDir()
	if err := pipeline.WriteDemoScans(dir); err != nil {
		t.Fatal(err)
	}
	job, err := pipeline.ReadJobFile(filepath.Join(dir, "job.toml"))
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "results")
	res, err := pipeline.RunBatch(context.Background(), pipeline.BatchOptions{Dir: dir, Out: out, Job: job, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	shots := shotDir(t)
	b.open(t, filepath.Join(out, "index.html"))
	if n := eval[int](t, b, `document.querySelectorAll("#scans tbody tr").length`); n != len(res.Summary.Rows) {
		t.Errorf("index has %d rows, want %d", n, len(res.Summary.Rows))
	}
	losses := 0
	for _, r := range res.Summary.Rows {
		if r.LossPct != nil {
			losses++
		}
	}
	checkImages(t, b, "index.html", losses)
	checkFitsWidth(t, b, "index.html", "#scans")
	checkLossSort(t, b, losses)
	screenshot(t, b, shots, "demo-index.png")
	for _, r := range res.Summary.Rows {
		if r.Status == pipeline.StatusFailed {
			continue
		}
		page := filepath.Join(pipeline.ScanOutDir(out, r.Path), "report.html")
		b.open(t, page)
		checkImages(t, b, r.Path, 4)
		pdf, err := chromedp.Run(b.ctx, chromedp.PrintToPDF(chromedp.PDFPreferCSSPageSize()))
		if err != nil {
			t.Fatalf("%s: printing: %v", r.Path, err)
		}
		if n := pdfPages(pdf); n != 1 {
			t.Errorf("%s: printed on %d A4 pages, want 1", r.Path, n)
		}
	}
}

// printShot screenshots the page as printed: print media at the width of
// an A4 sheet inside 10 mm margins (190 mm at 96 px per inch), then
// restores the screen.
func printShot(t *testing.T, b *browser, dir, name string) {
	t.Helper()
	media := func(m string) chromedp.Action[chromedp.Void] {
		return chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
			_, err := cdp.Call(ctx, tg, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: m})
			return err
		})
	}
	if err := chromedp.Do(b.ctx, media("print"), chromedp.EmulateViewport(718, 1000)); err != nil {
		t.Fatal(err)
	}
	screenshot(t, b, dir, name)
	if err := chromedp.Do(b.ctx, media(""), chromedp.EmulateViewport(1280, 900)); err != nil {
		t.Fatal(err)
	}
}

// pdfPages counts the page objects of a PDF ("/Type /Page" not followed
// by "s", which is the page tree).
func pdfPages(pdf []byte) int {
	n := 0
	for _, m := range regexp.MustCompile(`/Type\s*/Page([^s]|$)`).FindAllIndex(pdf, -1) {
		_ = m
		n++
	}
	return n
}

// shotDir is where the screenshots go: $GAPFLUX_SCREENSHOTS when set (to
// look at them), else a temporary folder.
func shotDir(t *testing.T) string {
	if d := os.Getenv("GAPFLUX_SCREENSHOTS"); d != "" {
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
		return d
	}
	return t.TempDir()
}

// TestPagesInBrowser runs a small batch with a failed and a rejected scan
// and checks its pages in headless Chromium: no console errors and no
// network requests, every picture rendered, one index row per scan,
// failures and rejects first, sorting by loss in both directions, one
// report page per analysed scan with the right verdict, and screenshots.
func TestPagesInBrowser(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a batch and a browser")
	}
	b := newBrowser(t)
	out, sum := smallBatch(t)
	statuses := map[string]string{}
	for _, r := range sum.Rows {
		statuses[r.Path] = r.Status
	}
	want := map[string]string{"line-a/dish.stl": pipeline.StatusOK, "line-a/dome.ply": pipeline.StatusOut,
		"line-b/in inches.stl": pipeline.StatusRejected, "line-b/truncated.stl": pipeline.StatusFailed}
	for p, st := range want {
		if statuses[p] != st {
			t.Errorf("%s: status %q, want %q (batch: %v)", p, statuses[p], st, statuses)
		}
	}
	shots := shotDir(t)

	b.open(t, filepath.Join(out, "index.html"))
	if n := eval[int](t, b, `document.querySelectorAll("#scans tbody tr").length`); n != len(sum.Rows) {
		t.Errorf("index has %d rows, want %d", n, len(sum.Rows))
	}
	order := eval[[]string](t, b, `Array.from(document.querySelectorAll("#scans tbody tr")).map(function (r) { return r.className.replace("row status-", ""); })`)
	if len(order) < 2 || order[0] != pipeline.StatusFailed || order[1] != pipeline.StatusRejected {
		t.Errorf("index order by status = %q, want failed, then rejected first", order)
	}
	checkImages(t, b, "index.html", 3) // two thumbnails and the trend chart
	checkFitsWidth(t, b, "index.html", "#scans")
	checkTrend(t, b)
	screenshot(t, b, shots, "index.png")

	checkLossSort(t, b, 2)
	screenshot(t, b, shots, "index-sorted.png")

	// Every link of the index opens; each scan page shows its verdict.
	headline := map[string]string{pipeline.StatusOK: "PASS", pipeline.StatusOut: "FAIL", pipeline.StatusRejected: "REJECTED"}
	for rel, st := range want {
		if st == pipeline.StatusFailed {
			continue
		}
		page := filepath.Join(pipeline.ScanOutDir(out, rel), "report.html")
		b.open(t, page)
		if got := strings.TrimSpace(eval[string](t, b, `document.getElementById("verdict").textContent`)); got != headline[st] {
			t.Errorf("%s: verdict %q, want %q", rel, got, headline[st])
		}
		pics := 4 // gap, flux, rings and the cell map
		if st == pipeline.StatusRejected {
			pics = 0 // stopped before pose and heat: no maps
		}
		checkImages(t, b, rel, pics)
		shot := strings.NewReplacer("/", "_", " ", "_").Replace(rel)
		screenshot(t, b, shots, shot+".png")
		// Printed, the page fits one A4 sheet.
		pdf, err := chromedp.Run(b.ctx, chromedp.PrintToPDF(chromedp.PDFPreferCSSPageSize()))
		if err != nil {
			t.Fatalf("%s: printing: %v", rel, err)
		}
		if n := pdfPages(pdf); n != 1 {
			t.Errorf("%s: printed on %d A4 pages, want 1", rel, n)
		}
		if err := os.WriteFile(filepath.Join(shots, shot+".pdf"), pdf, 0o644); err != nil {
			t.Fatal(err)
		}
		printShot(t, b, shots, shot+"-print.png")
	}
	// The index links resolve to existing files.
	b.open(t, filepath.Join(out, "index.html"))
	hrefs := eval[[]string](t, b, `Array.from(document.querySelectorAll("#scans a")).map(function (a) { return decodeURIComponent(a.getAttribute("href")); })`)
	if len(hrefs) != len(sum.Rows) {
		t.Errorf("%d links for %d scans: %q", len(hrefs), len(sum.Rows), hrefs)
	}
	for _, h := range hrefs {
		if _, err := os.Stat(filepath.Join(out, filepath.FromSlash(h))); errors.Is(err, os.ErrNotExist) {
			t.Errorf("index links to %s, which does not exist", h)
		}
	}
}

// TestComparePageInBrowser compares a bent base with itself turned 30° and
// 0.1 mm more bent, and checks compare.html in headless Chromium: no
// console errors or network requests, both change maps rendered, one table
// row per ring and per headline figure, the turn found, a screenshot.
func TestComparePageInBrowser(t *testing.T) {
	if testing.Short() {
		t.Skip("two analyses and a browser")
	}
	b := newBrowser(t)
	dir := t.TempDir()
	spec := synth.Spec{Shape: synth.Bend, DiameterM: 0.12, SagM: 0.3e-3, NoiseM: 5e-6, SpacingM: 1.5e-3, Seed: 1}
	later := spec
	later.SagM, later.FormTurnDeg, later.Seed = 0.4e-3, 30, 2
	var paths []string
	for _, sp := range []synth.Spec{spec, later} {
		sc, err := synth.Generate(sp)
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := synth.Encode(&buf, sc, synth.Encoding{Format: "ply", Binary: true}); err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, fmt.Sprintf("bend-%d.ply", sp.Seed))
		if err := os.WriteFile(p, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	job := pipeline.DefaultJob()
	job.Grid.CellMM = 1
	r, err := pipeline.Compare(context.Background(), pipeline.CompareInput{A: paths[0], B: paths[1], Job: job})
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "cmp")
	if err := os.MkdirAll(out, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := pipeline.WriteCompareOutputs(r, out); err != nil {
		t.Fatal(err)
	}
	b.open(t, filepath.Join(out, "compare.html"))
	checkImages(t, b, "compare.html", 2)
	c := r.Comparison
	if n := eval[int](t, b, `document.querySelectorAll("#rings tbody tr").length`); n != len(c.Rings) || n == 0 {
		t.Errorf("compare.html: %d ring rows, want %d", n, len(c.Rings))
	}
	if n := eval[int](t, b, `document.querySelectorAll("#figures tbody tr").length`); n != len(c.Figures) {
		t.Errorf("compare.html: %d figure rows, want %d", n, len(c.Figures))
	}
	if c.Alignment.AngleDeg == nil {
		t.Fatalf("no turn found: %s", c.Alignment.AngleNote)
	}
	text := eval[string](t, b, `document.querySelector(".headline").textContent`)
	if want := fmt.Sprintf("%.2f", *c.Alignment.AngleDeg); !strings.Contains(text, want) {
		t.Errorf("headline lacks the turn %s°:\n%s", want, text)
	}
	shots := shotDir(t)
	screenshot(t, b, shots, "compare.png")
	printShot(t, b, shots, "compare-print.png")
}
