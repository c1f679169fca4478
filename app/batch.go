package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"time"

	"whirlfit/analysis"
	"whirlfit/analysis/export"
	"whirlfit/dsp"
)

// analysisFlags are the options every analysing command shares.
type analysisFlags struct {
	blades  int
	stepAt  string
	channel string
	trigger int
	workers int
	quiet   bool
	fromS   float64
	toS     float64
}

func (a *analysisFlags) register(fs *flag.FlagSet) {
	fs.IntVar(&a.blades, "blades", 0, "propeller blade `count`; 0 estimates it from the harmonic comb")
	fs.StringVar(&a.stepAt, "step-at", "", "throttle command `times` in seconds, comma-separated (e.g. 1.0,3.0); dead time is measured from them")
	fs.StringVar(&a.channel, "channel", "mix", "`channel` to analyse: 1, 2, … (1-based) or mix (the mean of all)")
	fs.IntVar(&a.trigger, "trigger-channel", 0, "1-based `channel` carrying the throttle command (trigger or PWM line); 0 = none")
	fs.IntVar(&a.workers, "jobs", 0, "files analysed at once (`count`); 0 = one per CPU core")
	fs.BoolVar(&a.quiet, "quiet", false, "no progress line on stderr")
	fs.Float64Var(&a.fromS, "from", 0, "look for and fit steps from this time on, `seconds` (the whole recording is still tracked)")
	fs.Float64Var(&a.toS, "to", 0, fmt.Sprintf("look for and fit steps up to this time, `seconds` (0 = the end); the interval must lie inside the recording and last at least %g s", analysis.MinIntervalS))
}

// config checks the flags and returns the analysis configuration.
func (a *analysisFlags) config() (analysis.Config, error) {
	cfg := analysis.Config{Blades: a.blades, TriggerChannel: a.trigger}
	if a.blades < 0 {
		return cfg, fmt.Errorf("-blades must be 0 or more, not %d", a.blades)
	}
	if a.trigger < 0 {
		return cfg, fmt.Errorf("-trigger-channel must be 1 or more (0 = none), not %d", a.trigger)
	}
	switch ch := strings.TrimSpace(a.channel); ch {
	case "mix", "":
	default:
		n, err := strconv.Atoi(ch)
		if err != nil || n < 1 {
			return cfg, fmt.Errorf("-channel must be a channel number from 1 or mix, not %q", a.channel)
		}
		cfg.Channel = n
	}
	ts, err := parseList(a.stepAt, "-step-at")
	if err != nil {
		return cfg, err
	}
	for _, t := range ts {
		if t < 0 {
			return cfg, fmt.Errorf("-step-at: time %g s is negative", t)
		}
	}
	cfg.CommandTimesS = ts
	if a.fromS < 0 || a.toS < 0 || (a.toS > 0 && a.toS <= a.fromS) {
		return cfg, fmt.Errorf("-from %g and -to %g do not give an interval (seconds, -to 0 = the end)", a.fromS, a.toS)
	}
	cfg.FromS, cfg.ToS = a.fromS, a.toS
	return cfg, nil
}

// parseList reads comma-separated numbers.
func parseList(s, name string) ([]float64, error) {
	if strings.TrimSpace(s) == "" {
		return nil, nil
	}
	var out []float64
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil {
			return nil, fmt.Errorf("%s: %q is not a number", name, f)
		}
		out = append(out, v)
	}
	return out, nil
}

// parseInterleaved parses flags that may come before, between or after the
// file arguments. It returns the files, or the exit status to stop with
// (0 after -help, 2 on a usage error) and ok = false.
func parseInterleaved(fs *flag.FlagSet, args []string) (files []string, status int, ok bool) {
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return nil, 0, false
			}
			return nil, 2, false
		}
		if fs.NArg() == 0 {
			return files, 0, true
		}
		files = append(files, fs.Arg(0))
		args = fs.Args()[1:]
	}
}

// audioExts are the file name endings a folder is searched for.
var audioExts = []string{".wav", ".wave", ".flac", ".mp3", ".ogg", ".opus", ".m4a", ".aac", ".aif", ".aiff"}

// expandInputs replaces each folder among args by the recordings in it
// (by file name ending, sorted, not recursing); files are kept as given.
func expandInputs(args []string) ([]string, error) {
	var out []string
	for _, a := range args {
		st, err := os.Stat(a)
		if err != nil || !st.IsDir() {
			out = append(out, a) // a missing file is reported when it is read
			continue
		}
		ents, err := os.ReadDir(a)
		if err != nil {
			return nil, err
		}
		n := 0
		for _, e := range ents {
			if !e.IsDir() && slices.Contains(audioExts, strings.ToLower(filepath.Ext(e.Name()))) {
				out = append(out, filepath.Join(a, e.Name()))
				n++
			}
		}
		if n == 0 {
			return nil, fmt.Errorf("%s: no recordings in the folder (looked for %s)", a, strings.Join(audioExts, " "))
		}
	}
	return out, nil
}

// fileResult is one input's outcome.
type fileResult struct {
	Path   string
	Report *analysis.Report
	Err    error
}

// analyseFiles decodes and analyses the files on a bounded pool of
// workers and returns the results in input order. A file that fails is
// reported in its result; the others are still done. The progress line
// (nil = none) shows files done and the current stage.
func analyseFiles(ctx context.Context, files []string, cfg analysis.Config, workers int, prog *progressLine) []fileResult {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, len(files))
	res := make([]fileResult, len(files))
	next := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				res[i] = analyseOne(ctx, files[i], cfg, prog)
				prog.fileDone()
			}
		}()
	}
	prog.start(len(files))
feed:
	for i := range files {
		select {
		case next <- i:
		case <-ctx.Done():
			for j := i; j < len(files); j++ {
				res[j] = fileResult{Path: files[j], Err: fmt.Errorf("cancelled: %w", ctx.Err())}
			}
			break feed
		}
	}
	close(next)
	wg.Wait()
	prog.finish()
	return res
}

func analyseOne(ctx context.Context, path string, cfg analysis.Config, prog *progressLine) fileResult {
	a, err := dsp.DecodeFile(path)
	if err != nil {
		return fileResult{Path: path, Err: err}
	}
	rep, err := analysis.Run(ctx, a, cfg, prog.stage(filepath.Base(path)))
	if err != nil {
		return fileResult{Path: path, Err: err}
	}
	rep.File = path
	return fileResult{Path: path, Report: rep}
}

// reportErrors writes one line per failed file and returns the exit status
// (1 when some failed) and the reports that succeeded.
func reportErrors(stderr io.Writer, cmd string, res []fileResult) (reps []*analysis.Report, status int) {
	for _, r := range res {
		if r.Err != nil {
			msg := oneLine(r.Err)
			if !strings.Contains(msg, r.Path) { // decoders name the file already
				msg = r.Path + ": " + msg
			}
			fmt.Fprintf(stderr, "whirlfit: %s: %s\n", cmd, msg)
			status = 1
			continue
		}
		reps = append(reps, r.Report)
	}
	return reps, status
}

func oneLine(err error) string { return strings.ReplaceAll(err.Error(), "\n", "; ") }

// progressLine keeps one updating status line on stderr for long work:
// files done of total and the current file's stage. A nil *progressLine
// does nothing. Updates are limited to 10 a second.
type progressLine struct {
	w     io.Writer
	mu    sync.Mutex
	total int
	done  int
	last  time.Time
	began time.Time
	wrote bool
	cur   string
}

// newProgress returns a progress line on w, or nil when quiet or when w
// is not a terminal (a log file gets no carriage-return updates).
func newProgress(w io.Writer, quiet bool) *progressLine {
	if quiet || !isTerminal(w) {
		return nil
	}
	return &progressLine{w: w, began: time.Now()}
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// progressEvery is the shortest time between two updates of the line;
// progressAfter how long work runs before the line appears (short work
// shows none).
const (
	progressEvery = 100 * time.Millisecond
	progressAfter = 500 * time.Millisecond
)

func (p *progressLine) start(total int) {
	if p == nil {
		return
	}
	p.mu.Lock()
	p.total = total
	p.mu.Unlock()
}

func (p *progressLine) fileDone() {
	if p == nil {
		return
	}
	p.mu.Lock()
	p.done++
	p.drawLocked(true)
	p.mu.Unlock()
}

// stage returns the analysis progress callback for one file.
func (p *progressLine) stage(name string) analysis.Progress {
	if p == nil {
		return nil
	}
	return func(stage string, done, total int) {
		p.mu.Lock()
		defer p.mu.Unlock()
		pct := 0
		if total > 0 {
			pct = 100 * done / total
		}
		p.cur = fmt.Sprintf("%s: %s %d %%", name, stage, pct)
		p.drawLocked(false)
	}
}

func (p *progressLine) drawLocked(force bool) {
	now := time.Now()
	if now.Sub(p.began) < progressAfter || (!force && now.Sub(p.last) < progressEvery) {
		return
	}
	p.last = now
	fmt.Fprintf(p.w, "\r\033[Kwhirlfit: %d/%d files done  %s", p.done, p.total, p.cur)
	p.wrote = true
}

func (p *progressLine) finish() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.wrote {
		fmt.Fprint(p.w, "\r\033[K")
	}
}

// perFilePath returns the output path for input file when several inputs
// share one output option: PATH's name gets "-" and the input's base name
// (without its extension) before PATH's extension. With one input, PATH
// is used as it is.
func perFilePath(path, input string, many bool) string {
	if !many {
		return path
	}
	ext := filepath.Ext(path)
	base := strings.TrimSuffix(filepath.Base(input), filepath.Ext(input))
	return strings.TrimSuffix(path, ext) + "-" + base + ext
}

// checkOutputs returns an error naming the first of paths that exists, so
// that a run which would be refused at the end (no -force) stops before
// the analysis. The atomic write checks again when it writes.
func checkOutputs(force bool, paths ...string) error {
	if force {
		return nil
	}
	for _, p := range paths {
		if p == "" {
			continue
		}
		if _, err := os.Lstat(p); err == nil {
			return fmt.Errorf("%s: %w", p, export.ErrExists)
		}
	}
	return nil
}
