package main

import (
	"context"
	"image/png"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"statemix/lineshape"
	"statemix/lineshape/format"
)

// findChromium returns the chromium executable, or "" when there is none.
func findChromium() string {
	if st, err := os.Stat("/usr/bin/chromium"); err == nil && !st.IsDir() {
		return "/usr/bin/chromium"
	}
	for _, n := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(n); err == nil {
			return p
		}
	}
	return ""
}

// artifactDir is where screenshots are kept: $STATEMIX_ARTIFACTS when set
// (created if needed), else a temporary folder of the test.
func artifactDir(t *testing.T) string {
	t.Helper()
	if d := os.Getenv("STATEMIX_ARTIFACTS"); d != "" {
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
		return d
	}
	return t.TempDir()
}

// runChromium runs headless chromium with a fresh profile on url and the
// extra arguments, with a 60 s timeout, and returns its stdout.
func runChromium(t *testing.T, chromium, url string, extra ...string) string {
	t.Helper()
	ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
	defer cancel()
	args := []string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic",
		"--hide-scrollbars", "--user-data-dir=" + t.TempDir()}
	args = append(args, extra...)
	args = append(args, url)
	cmd := exec.CommandContext(ctx, chromium, args...)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if ctx.Err() != nil {
		t.Fatalf("chromium did not finish within 60 s: %v\n%s", ctx.Err(), stderr.String())
	}
	if err != nil {
		t.Fatalf("chromium %v: %v\n%s", extra, err, stderr.String())
	}
	return string(out)
}

// browserFixture writes two Ti standards and a spot of theirs, and a short
// depth profile, with the demo's synthesis, and returns the folder.
func browserFixture(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	write := func(name string, specs ...*lineshape.Spectrum) {
		if err := format.WriteFile(filepath.Join(dir, name), specs, format.FormatVAMAS); err != nil {
			t.Fatal(err)
		}
	}
	rec := func(seed uint64, comps []demoComponent, dwell float64) *lineshape.Spectrum {
		s, err := demoTiRegion.record(rand.New(rand.NewPCG(seed, 7)), comps, 0, 1, dwell)
		if err != nil {
			t.Fatal(err)
		}
		demoMeta(s, "browser test (synthetic)", dwell, "synthetic")
		return s
	}
	write("tin-film.vms", rec(1, []demoComponent{{demoTiN, 1}}, 1))
	write("tio2-film.vms", rec(2, []demoComponent{{demoTiO2, 1}}, 1))
	write("spot.vms", rec(3, []demoComponent{{demoTiN, 0.6}, {demoTiO2, 0.4}}, 0.5))
	var steps []*lineshape.Spectrum
	for i := range 8 {
		ts := 20 * float64(i)
		fo := demoOxideInProfile(ts*2.4/60, 3, 0.6)
		s := rec(10+uint64(i), []demoComponent{{demoTiO2, fo}, {demoTiN, 1 - fo}}, 0.5)
		s.Meta.SputterTimeS = &ts
		steps = append(steps, s)
	}
	write("depth.vms", steps...)
	return dir
}

// TestReportInBrowser loads the HTML reports of fit and profile in headless
// chromium: the DOM must hold the inline SVG figure and the results table
// with the state names, and screenshots at a desktop and a phone width
// must be non-trivial PNGs. The screenshots are kept (STATEMIX_ARTIFACTS).
// Without chromium the test is skipped.
func TestReportInBrowser(t *testing.T) {
	chromium := findChromium()
	if chromium == "" {
		t.Skip("chromium not found (/usr/bin/chromium or in PATH): skipping the browser test of the HTML reports; install it with apt-get install -y chromium")
	}
	dir := browserFixture(t)
	refs := []string{"--ref-file", filepath.Join(dir, "tin-film.vms") + ":nitride", "--ref-file", filepath.Join(dir, "tio2-film.vms") + ":oxide"}
	fitReport := filepath.Join(dir, "fit-report.html")
	if code, _, stderr := runApp(t, nil, append([]string{"fit", filepath.Join(dir, "spot.vms"), "--report", fitReport, "--uncertainty", "covariance"}, refs...)...); code != 0 {
		t.Fatalf("fit --report: exit %d: %s", code, stderr)
	}
	profReport := filepath.Join(dir, "profile-report.html")
	if code, _, stderr := runApp(t, nil, append([]string{"profile", filepath.Join(dir, "depth.vms"), "--sputter-rate", "2.4", "--report", profReport}, refs...)...); code != 0 {
		t.Fatalf("profile --report: exit %d: %s", code, stderr)
	}
	art := artifactDir(t)
	tableWithStates := regexp.MustCompile(`(?s)<table.*nitride.*oxide.*</table>`)
	for _, c := range []struct{ name, path string }{{"fit", fitReport}, {"profile", profReport}} {
		url := "file://" + c.path
		// One run dumps the DOM and takes the desktop screenshot, a second
		// one the phone-width screenshot.
		desktop := filepath.Join(art, c.name+"-report-desktop.png")
		dom := runChromium(t, chromium, url, "--dump-dom", "--screenshot="+desktop, "--window-size=1200,1600")
		if !strings.Contains(dom, "<svg") {
			t.Errorf("%s report: the DOM has no inline <svg> figure", c.name)
		}
		if !tableWithStates.MatchString(dom) {
			t.Errorf("%s report: the DOM has no table naming the states nitride and oxide", c.name)
		}
		checkScreenshot(t, desktop, 1200, 1600)
		phone := filepath.Join(art, c.name+"-report-phone.png")
		runChromium(t, chromium, url, "--screenshot="+phone, "--window-size=390,844")
		checkScreenshot(t, phone, 390, 844)
	}
	t.Logf("screenshots in %s", art)
}

// checkScreenshot checks that path is a PNG of the window's size and more
// than 20 kB (a blank or error page compresses to a few kB).
func checkScreenshot(t *testing.T, path string, w, h int) {
	t.Helper()
	st, err := os.Stat(path)
	if err != nil {
		t.Errorf("no screenshot %s: %v", path, err)
		return
	}
	if st.Size() <= 20<<10 {
		t.Errorf("screenshot %s is only %d bytes: the page did not render", path, st.Size())
	}
	f, err := os.Open(path)
	if err != nil {
		t.Error(err)
		return
	}
	defer f.Close()
	cfg, err := png.DecodeConfig(f)
	if err != nil {
		t.Errorf("screenshot %s: %v", path, err)
		return
	}
	if cfg.Width != w || cfg.Height != h {
		t.Errorf("screenshot %s is %d x %d, want %d x %d", path, cfg.Width, cfg.Height, w, h)
	}
}
