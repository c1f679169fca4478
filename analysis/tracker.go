package analysis

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"

	"whirlfit/dsp"
)

// TrackConfig tunes the ridge tracker. Its zero value means defaults.
type TrackConfig struct {
	// Blades is the propeller's blade count; 0 estimates it from the
	// harmonic comb and says so in a warning.
	Blades int
	// MinShaftHz and MaxShaftHz bound the shaft frequencies searched
	// (defaults 40 and 1000 Hz: 2,400–60,000 rpm). MaxShaftHz is lowered to
	// what the sample rate can show.
	MinShaftHz, MaxShaftHz float64
	// STFT sets the frames of the output track (the refinement pass). Zero
	// fields are chosen from the speed found by the search pass: a Hann
	// frame of about 4.5 periods of the lowest shaft speed (so that
	// neighbouring shaft-order lines lie about 4 bins apart) but at least
	// 20 ms, rounded to a power of two, and a hop of about 2.5 ms. A shorter frame resolves faster changes; each
	// track sample sees the true speed through Track.Kernel.
	STFT dsp.STFTConfig
	// MaxAccelHzPerS bounds how fast the shaft frequency may change between
	// frames of the search pass (default 60,000 Hz/s: a 300 Hz step with a
	// time constant of 5 ms starts at that slope, faster than small
	// multirotor motors are reported to spin up — common practice).
	MaxAccelHzPerS float64
}

// Defaults of the tracker.
const (
	defaultMinShaftHz = 40
	defaultMaxShaftHz = 1000
	defaultMaxAccel   = 60000
	// candidateStep is the relative spacing of the search grid, 0.25 %.
	candidateStep = 0.0025
	// searchFrameS is the search pass's minimum frame (a long Hann window
	// finds weak combs); searchHopS its hop, a quarter of the 85 ms frame
	// it gives at 48 kHz (10 ms scored alike on the end-to-end sweep at
	// twice the work); readingHopS the hop of the blade-count reading pass,
	// which only has to find the comb for its profile.
	searchFrameS = 0.06
	searchHopS   = 0.02
	readingHopS  = 0.04
	// readingMinFrames is the least number of search frames the reading
	// pass keeps before its hop grows beyond searchHopS.
	readingMinFrames = 750
	// maxSearchFrames bounds the search pass's salience matrix (frames ×
	// candidates float32 and int16): the hop grows on long files.
	maxSearchFrames = 12000
	// refineCycles is the refinement frame in periods of the lowest speed.
	refineCycles = 4.5
	// refineMinFrameS is the shortest default refinement frame: shorter
	// frames cannot part a blade-pass line from a tone or another machine's
	// line 100–200 Hz away, and τ ≥ 8 ms needs no finer kernel (a 20 ms
	// Hann frame's kernel has a standard deviation of 2.8 ms).
	refineMinFrameS = 0.02
	// fineMinFrameS is the shortest frame of the fine track (half the
	// default frame; below this none is made).
	fineMinFrameS = 0.0075
	// refineHopS is the default hop of the output track.
	refineHopS = 0.0025
	// maxDisplayFrames bounds the display spectrogram's rows.
	maxDisplayFrames = 2000
	// stationaryWeight and stationarySpread tune suppressStationary: the
	// share of the median taken off and the relative drift (±2 %) still
	// counted as stationary.
	stationaryWeight = 0.7
	stationarySpread = 0.02
	// backgroundFar is how far (relative, 8 %) the path must be from a
	// candidate for that candidate's salience to count as background.
	backgroundFar = 0.08
	// pathSlopeCost is the Viterbi cost of a change of ln f by 1, in units
	// of the file's typical frame salience; voicingCost is the cost of
	// switching between motor and no motor, in the same units.
	pathSlopeCost = 1.0
	voicingCost   = 0.5
	// refineMinZ is the least excess (nepers, 2.1 = 9 dB) of a harmonic's
	// peak over the noise floor for it to enter the pooled estimate.
	refineMinZ = 2.1
	// refineStartRel is the standard error assumed for the search's
	// candidate before any line is refined (the grid step and the coarse
	// bins of the refinement frame); refineFloorRel bounds the running
	// standard error from below (lines of a speed that changes within the
	// frame disagree by more than their noise).
	refineStartRel = 0.004
	refineFloorRel = 0.0005
	// profileMinHz is the lowest frequency entered in the comb profile;
	// profileEvery thins the frames that enter it.
	profileMinHz  = 30
	profileEvery  = 4
	profileFrames = 1500
	// despikeHalf (frames each side) and despikeRel tune despikeTrack.
	despikeHalf = 4
	despikeRel  = 0.02
	// maxReadBlades is the largest blade count the comb reading considers.
	maxReadBlades = 6
	// refineHarmonics bounds the harmonics used in refinement, in multiples
	// of the blade count.
	refineHarmonics = 8
)

func (c TrackConfig) resolve(fs float64) (TrackConfig, error) {
	if c.Blades < 0 {
		return c, fmt.Errorf("analysis: blade count %d is negative", c.Blades)
	}
	if c.MinShaftHz == 0 {
		c.MinShaftHz = defaultMinShaftHz
	}
	if c.MaxShaftHz == 0 {
		c.MaxShaftHz = defaultMaxShaftHz
	}
	if c.MaxAccelHzPerS == 0 {
		c.MaxAccelHzPerS = defaultMaxAccel
	}
	// The blade-pass line must stay below Nyquist.
	b := max(c.Blades, 1)
	c.MaxShaftHz = min(c.MaxShaftHz, 0.45*fs/float64(b))
	if !(c.MinShaftHz > 0) || !(c.MaxShaftHz > c.MinShaftHz) || math.IsInf(c.MaxShaftHz, 0) {
		return c, fmt.Errorf("analysis: shaft range %g–%g Hz is empty or invalid at %g Hz sampling", c.MinShaftHz, c.MaxShaftHz, fs)
	}
	if !(c.MaxAccelHzPerS > 0) {
		return c, fmt.Errorf("analysis: maximum acceleration %g Hz/s must be positive", c.MaxAccelHzPerS)
	}
	return c, nil
}

// TrackSignal tracks the rotor speed of sig. It returns one track sample per
// refinement frame and a display spectrogram of at most a few thousand
// frames (from the search pass's long window).
//
// Method, in three stages:
//
//  1. Search: a long Hann STFT (at least 60 ms and three periods of
//     MinShaftHz); per frame the harmonic salience (salience.go) of every
//     candidate on a 0.25 % log grid of shaft frequencies, read on the
//     blade-pass comb. The voicing (motor or not, per frame) comes from the
//     best path by dynamic programming (ridgePath: acceleration bound,
//     absolute-slope cost, unvoiced state). The path through the voiced
//     frames is then solved again on salience from which lines that are
//     there all the time (suppressStationary) and lines that stay strong
//     while the path is elsewhere (suppressBackground) have been taken off:
//     fans, pumps, a second rotor, tones and hum cannot hold the track,
//     and frames where the path still follows such a line (the standstill
//     before a spin-up) are left unvoiced (dropBackgroundRuns). A second
//     path, solved without the first path's source, replaces it when its
//     comb is clearly the louder, or when it steps while the first stays
//     put (louderSource, a warning).
//  2. Refinement: a shorter Hann STFT sized to the speed found. In each
//     frame the local salience picks the best candidate near the search
//     path, and each harmonic h's peak near h times the running estimate is
//     refined with Jacobsen's complex three-bin estimator in its Hann form
//     (dsp.InterpJacobsenHann, bias below 1e-8 bin; the alternatives
//     measured in dsp — quadratic on log magnitude, 0.016 bin; power-scaled
//     quadratic, 2.8e-4 bin — are worse and gain nothing in cost here,
//     where complex bins are at hand). A line is accepted only within half
//     a bin plus three standard errors of its prediction, and the
//     harmonics' shaft estimates f_h/h are pooled by inverse variance,
//     weight h²·SNR_h, after rejecting those far from their median (a
//     passing whine or hum line beside a harmonic). Frames within which
//     the speed moves by more than a bin are then estimated again from the
//     power centroids of the spread lines (refineMoving), and a run of
//     samples that starts after a stretch without motor (a spin-up from
//     standstill) is followed back on the blade-pass line
//     (extendSpinUps), as is the move before a jump of the track (a step
//     whose old lines ring on in the room: followJumps).
//  3. Checks: a stretch of the track that slipped an octave off and back
//     is put back where its own comb profile allows it (voteStretches, a
//     warning); the comb's profile along the track tells whether another
//     blade count fits better (a warning), corrects a clear octave error of
//     the shaft speed (a warning), or, with Blades = 0, gives the blade
//     count (a warning; weak where the shaft-order lines are weak).
//
// Each track sample is the w²-weighted average of the instantaneous shaft
// frequency over its frame (w the refinement window); Track.Kernel holds
// that kernel. A peak estimate holds it only while the speed moves by less
// than about a bin within the frame; where it moves more (a fast step seen
// through the frame), a second pass replaces the peaks by the power
// centroids of the spread lines (refineMoving), which hold it there too.
// TestTrackKernel and TestTrackKernelFastSteps check it on rendered steps.
func TrackSignal(ctx context.Context, sig dsp.Signal, cfg TrackConfig, progress func(done, total int)) (*Track, *dsp.Spectrogram, error) {
	fs := sig.SampleRate
	if !(fs > 0) || math.IsInf(fs, 0) {
		return nil, nil, fmt.Errorf("analysis: sample rate %g Hz is not valid", fs)
	}
	cfg, err := cfg.resolve(fs)
	if err != nil {
		return nil, nil, err
	}
	if len(sig.Samples) < 256 {
		return nil, nil, fmt.Errorf("analysis: recording of %d samples is too short to track (at least 256)", len(sig.Samples))
	}
	tk := &tracker{cfg: cfg, fs: fs, x: sig.Samples, progress: progress}
	blades := cfg.Blades
	var warn []string
	if blades == 0 {
		// Find the comb's fundamental without a blade count, read the
		// blade count from the comb's profile, then track with it.
		tr, _, err := tk.run(ctx, 0, false)
		if err != nil {
			return nil, nil, err
		}
		b, msg := tk.estimateBlades()
		if tr.validCount() == 0 {
			b, msg = 2, "no motor found; blade count assumed 2"
		}
		blades = b
		warn = append(warn, msg)
		cfg.MaxShaftHz = min(cfg.MaxShaftHz, 0.45*fs/float64(blades))
		tk.cfg = cfg
	}
	tr, spec, err := tk.run(ctx, blades, true)
	if err != nil {
		return nil, nil, err
	}
	tr.Warnings = append(warn, tr.Warnings...)
	if cfg.Blades > 0 {
		if msg := tk.checkBlades(cfg.Blades); msg != "" {
			tr.Warnings = append(tr.Warnings, msg)
		}
	}
	tr.Warnings = append(tr.Warnings, tk.checkOctave(tr)...)
	if msg := clippingWarning(sig.Samples); msg != "" {
		tr.Warnings = append(tr.Warnings, msg)
	}
	return tr, spec, nil
}

func (t *Track) validCount() int {
	n := 0
	for i := range t.ShaftHz {
		if t.Valid(i) {
			n++
		}
	}
	return n
}

// tracker holds one tracking job.
type tracker struct {
	cfg      TrackConfig
	fs       float64
	x        []float32
	progress func(done, total int)
	done     int

	grid []float64 // candidate shaft frequencies

	// Search pass.
	search dsp.STFTConfig
	path   []int32

	// Comb profile from the refinement pass: mean clamped excess at
	// q/profileDiv shaft orders (index q), and how many frames saw it.
	prof  []float64
	profN []int
	peaks []profilePeak // cached lines of the profile (profilePeaks)
	// voted: a stretch between octave jumps was rescaled (voteStretches);
	// the whole-file profile no longer matches the track, and its check
	// is left out.
	voted bool
}

// run performs the search and refinement passes with the given blade count
// (0 = all harmonics alike). display asks for the display spectrogram.
func (tk *tracker) run(ctx context.Context, blades int, display bool) (*Track, *dsp.Spectrogram, error) {
	cfg := tk.cfg
	fs := tk.fs
	tk.grid = newCandidateGrid(cfg.MinShaftHz, cfg.MaxShaftHz, candidateStep)
	K := len(tk.grid)

	// Search pass: a frame long enough to hold three periods of the lowest
	// shaft speed (so that shaft-order lines are three bins apart), and at
	// least searchFrameS.
	n1 := pow2AtLeast(max(searchFrameS*fs, 3*fs/cfg.MinShaftHz))
	for n1 > len(tk.x) && n1 > 256 {
		n1 /= 2
	}
	hopS := searchHopS
	if blades == 0 {
		// Coarser on long recordings only: a short one needs every frame
		// for its profile.
		hopS = min(readingHopS, max(searchHopS, float64(len(tk.x))/fs/readingMinFrames))
	}
	hop1 := max(int(math.Round(hopS*fs)), (len(tk.x)-n1)/maxSearchFrames+1)
	tk.search = dsp.STFTConfig{FrameLen: n1, Hop: hop1, FFTLen: n1}.Resolve(fs)
	sc := tk.search
	T := sc.NumFrames(len(tk.x))
	bins := sc.Bins()
	binHz := fs / float64(sc.FFTLen)
	comb := newCombTable(tk.grid, binHz, bins, blades, combHarmonics)
	sal := make([]float32, T*K)

	var red *dsp.Reducer
	if display {
		var err error
		if red, err = dsp.NewReducer(sc, fs, len(tk.x), maxDisplayFrames); err != nil {
			return nil, nil, fmt.Errorf("analysis: tracking: %w", err)
		}
	}
	workers := sc.Workers
	scratch := make([]searchScratch, workers)
	scat := newScatter(comb, bins)
	for w := range scratch {
		scratch[w].z = make([]float32, bins)
		scratch[w].pk = make([]float32, bins)
		scratch[w].sc = scat.worker()
	}
	// Progress counts frames: this search pass, the refinement (about
	// twice its frames at the output hop, with the second pass over moving
	// frames) and, for the blade-count reading pass, the tracking run after
	// it too (whose search pass is as long as this one).
	outHop := max(1, int(math.Round(refineHopS*fs)))
	outFrames := T * sc.Hop / outHop
	// The fine track (see Track.fine) is made on the final pass when the
	// frame is the default and long enough to halve.
	fine := display && blades > 0 && cfg.STFT.FrameLen == 0
	total := tk.done + T + 2*outFrames
	if fine {
		total += 2 * outFrames
	}
	if blades == 0 {
		nextT := outFrames * outHop / max(1, int(math.Round(searchHopS*fs)))
		total = T + min(outFrames/profileEvery, profileFrames) + nextT + 2*outFrames
	}
	lim := comb.readLimit(K) // the bins the combs read
	err := sc.Process(ctx, tk.x, fs, func(w, i int, re, im []float32) {
		s := &scratch[w]
		s.wh.whitenBelow(s.z, s.pk, re, im, lim)
		s.sc.salience(sal[i*K:(i+1)*K], s.z, s.pk, lim)
		if red != nil {
			red.Frame(w, i, re, im)
		}
	}, tk.report(total))
	if err != nil {
		return nil, nil, fmt.Errorf("analysis: tracking: %w", err)
	}
	tk.done += T
	var spec *dsp.Spectrogram
	if red != nil {
		spec = red.Spectrogram()
	}

	// Typical salience of a frame with a motor: the median of the frames'
	// maxima where positive.
	var maxima []float32
	for i := 0; i < T; i++ {
		if m := slices.Max(sal[i*K : (i+1)*K]); m > 0 {
			maxima = append(maxima, m)
		}
	}
	var tr *Track
	var sourceMsg string
	if len(maxima) == 0 {
		tk.path = make([]int32, T)
		for i := range tk.path {
			tk.path[i] = -1
		}
	} else {
		slices.Sort(maxima)
		sref := maxima[len(maxima)/2]
		rp := ridgePath{T: T, K: K, lambda: pathSlopeCost * sref * float32(comb.logStep),
			switchCost: voicingCost * sref, maxJump: make([]int32, K), bp: new([]int16)}
		dt := float64(sc.Hop) / fs
		var stat []float32
		for k, f := range tk.grid {
			rp.maxJump[k] = int32(math.Ceil(math.Log1p(cfg.MaxAccelHzPerS*dt/f)/comb.logStep)) + 2
		}
		// Voicing from the salience as it is; the path through the voiced
		// frames from the salience with stationary lines pushed down.
		voiced := rp.solve(sal)
		var bg []float32
		if stat = suppressStationary(sal, T, K, stationaryWeight, int(math.Ceil(stationarySpread/comb.logStep))); stat != nil {
			rp.force = make([]int8, T)
			for i, k := range voiced {
				rp.force[i] = 1
				if k < 0 {
					rp.force[i] = -1
				}
			}
			tk.path = rp.solve(sal)
			// Lines that stay strong while the path is elsewhere are the
			// background: take their level off and solve once more.
			spread := int(math.Ceil(stationarySpread / comb.logStep))
			if bg = suppressBackground(sal, T, K, tk.path, int(math.Ceil(backgroundFar/comb.logStep)), spread); bg != nil {
				tk.path = rp.solve(sal)
				dropBackgroundRuns(tk.path, sal, K, stat, bg, max(1, int(math.Round(backgroundRunS*fs/float64(sc.Hop)))))
			}
		} else {
			tk.path = voiced
		}
		// The raw salience for the second-source check: the suppressions
		// were fitted to the first path's source.
		for _, off := range [][]float32{stat, bg} {
			if off == nil {
				continue
			}
			for t := 0; t < T; t++ {
				row := sal[t*K : (t+1)*K]
				for k := range row {
					row[k] += off[k]
				}
			}
		}
		p2, msg, err := tk.louderSource(ctx, sal, rp, comb, blades)
		if err != nil {
			return nil, nil, err
		}
		if p2 != nil {
			tk.path, sourceMsg = p2, msg
		}
	}
	sal = nil
	tr, err = tk.refine(ctx, blades, total, 1)
	if err != nil {
		return nil, nil, err
	}
	if fine {
		// The fine track leaves the comb profile and the octave-vote state
		// as the track made them; its own warnings are not the track's.
		prof, profN, voted := tk.prof, tk.profN, tk.voted
		ft, err := tk.refine(ctx, blades, total, 2)
		if err != nil {
			return nil, nil, err
		}
		tk.prof, tk.profN, tk.voted, tk.peaks = prof, profN, voted, nil
		if ft != nil {
			ft.Warnings = nil
			tr.fine = ft
		} else if tk.progress != nil {
			// No fine track (the frame is too short to halve): its share
			// of the progress is done.
			tk.progress(total, total)
		}
	}
	if sourceMsg != "" {
		tr.Warnings = append(tr.Warnings, sourceMsg)
	}
	return tr, spec, nil
}

// suppressStationary lowers each candidate's salience by weight times its
// median over the whole recording (where positive), dilated over ±spread
// candidates so that a slowly drifting line counts as stationary too.
//
// A line that is there all the time — a fan, a pump, a second rotor at a
// fixed speed, a whine tone, mains hum — has a high median at its
// candidates and is pushed down; the motor, which steps between speeds,
// has a low median at each of them and keeps its salience. The tracker
// decides voicing on the salience before this step and only the path
// through the voiced frames after it, so a motor that holds one speed all
// along is still found (it loses the same share everywhere it is). This is
// the time-domain counterpart of whitening the spectrum: what stands out is
// what changes.
//
// It returns the amount taken off each candidate, nil when nothing changed.
func suppressStationary(sal []float32, T, K int, weight float32, spread int) []float32 {
	if T < 8 || weight == 0 {
		return nil
	}
	med, _ := columnMedians(sal, T, K, nil)
	for k := range med {
		med[k] = max(0, med[k])
	}
	dil := make([]float32, K)
	for k := range dil {
		for j := max(0, k-spread); j <= min(K-1, k+spread); j++ {
			dil[k] = max(dil[k], med[j])
		}
	}
	if slices.Max(dil) == 0 {
		return nil
	}
	for k := range dil {
		dil[k] *= weight
	}
	for t := 0; t < T; t++ {
		row := sal[t*K : (t+1)*K]
		for k := range row {
			row[k] -= dil[k]
		}
	}
	return dil
}

// columnMedians returns, for each candidate k, the median (element n/2 in
// order) of its salience over the frames t of sal (frames × K) for which
// keep(t, k) holds (every frame when keep is nil), and that count n. The
// columns are gathered a block at a time — one cache line of every row
// serves a block of columns, where gathering one column reads a line per
// frame — and the blocks are shared among the cores.
func columnMedians(sal []float32, T, K int, keep func(t, k int) bool) (med []float32, n []int) {
	const block = 16
	med, n = make([]float32, K), make([]int, K)
	nb := (K + block - 1) / block
	next := make(chan int, nb)
	for b := range nb {
		next <- b
	}
	close(next)
	var wg sync.WaitGroup
	for range min(nb, runtime.GOMAXPROCS(0)) {
		wg.Go(func() {
			cols := make([]float32, block*T)
			var cnt [block]int
			for b := range next {
				k0 := b * block
				w := min(block, K-k0)
				cnt = [block]int{}
				for t := 0; t < T; t++ {
					row := sal[t*K+k0 : t*K+k0+w]
					for j, v := range row {
						if keep == nil || keep(t, k0+j) {
							cols[j*T+cnt[j]] = v
							cnt[j]++
						}
					}
				}
				for j := range w {
					n[k0+j] = cnt[j]
					if cnt[j] > 0 {
						med[k0+j] = dsp.SelectK(cols[j*T:j*T+cnt[j]], cnt[j]/2)
					}
				}
			}
		})
	}
	wg.Wait()
	return med, n
}

// suppressBackground takes off each candidate's background level: the
// median of its salience over the voiced frames in which the path lies more
// than far candidates away (where positive, dilated over ±spread). A line
// that is strong while the path is elsewhere belongs to something else in
// the room; the motor's own speeds are quiet when it runs at another one.
// Candidates that the path is near in more than three quarters of the
// voiced frames keep their level (a steady recording has no "elsewhere"). It
// returns the amount taken off each candidate, nil when nothing changed.
func suppressBackground(sal []float32, T, K int, path []int32, far, spread int) []float32 {
	voiced := 0
	for _, k := range path {
		if k >= 0 {
			voiced++
		}
	}
	if voiced < 16 {
		return nil
	}
	med, n := columnMedians(sal, T, K, func(t, k int) bool {
		p := int(path[t])
		return p >= 0 && (p < k-far || p > k+far)
	})
	bg := make([]float32, K)
	any := false
	for k := range bg {
		if 4*n[k] >= voiced && med[k] > 0 {
			bg[k], any = med[k], true
		}
	}
	if !any {
		return nil
	}
	dil := make([]float32, K)
	for k := range dil {
		for j := max(0, k-spread); j <= min(K-1, k+spread); j++ {
			dil[k] = max(dil[k], bg[j])
		}
	}
	for t := 0; t < T; t++ {
		row := sal[t*K : (t+1)*K]
		for k := range row {
			row[k] -= dil[k]
		}
	}
	return dil
}

// backgroundRunS is the half width of the window over which
// dropBackgroundRuns compares a path's salience before and after the
// suppressions; backgroundKeep the share it must keep.
const (
	backgroundRunS = 0.25
	backgroundKeep = 0.2
)

// dropBackgroundRuns leaves unvoiced the frames where the path follows a
// line of the background: over the voiced frames within ±half frames, the
// path's salience after suppressStationary and suppressBackground (sal;
// stat and bg are what they took off each candidate) keeps less than
// backgroundKeep of what it had before. Mains hum or another machine that
// is there all along and holds the path while the motor stands still
// loses all its salience to the two suppressions (it is stationary, and
// strong while the path is elsewhere); the motor, which is quiet at its
// speeds while it runs at others, keeps most of its own, and a motor
// steady over the whole recording keeps 1 − stationaryWeight of it. Such
// frames, voiced, would start the track on the hum line before a spin-up
// and set the refinement's frame from its speed.
func dropBackgroundRuns(path []int32, sal []float32, K int, stat, bg []float32, half int) {
	T := len(path)
	after := make([]float64, T+1) // prefix sums over voiced frames
	before := make([]float64, T+1)
	for t, k := range path {
		after[t+1], before[t+1] = after[t], before[t]
		if k >= 0 {
			v := sal[t*K+int(k)]
			after[t+1] += float64(v)
			before[t+1] += float64(v + stat[k] + bg[k])
		}
	}
	drop := make([]bool, T)
	voiced, nd := 0, 0
	for t, k := range path {
		if k < 0 {
			continue
		}
		voiced++
		a, b := max(0, t-half), min(T, t+half+1)
		if sb := before[b] - before[a]; sb > 0 && after[b]-after[a] < backgroundKeep*sb {
			drop[t] = true
			nd++
		}
	}
	if 2*nd > voiced {
		// Not a background line beside the motor: the path flips between
		// two readings of one comb (the suppressions then take each
		// reading's level off while the path is at the other).
		return
	}
	for t, d := range drop {
		if d {
			path[t] = -1
		}
	}
}

type searchScratch struct {
	wh    whitener
	z, pk []float32
	sc    *scatter
}

func (tk *tracker) report(total int) func(done, total int) {
	if tk.progress == nil {
		return nil
	}
	base := tk.done
	return func(d, _ int) { tk.progress(min(base+d, total), total) }
}

// pow2AtLeast returns the smallest power of two ≥ x.
func pow2AtLeast(x float64) int {
	n := 1
	for float64(n) < x {
		n <<= 1
	}
	return n
}

// pow2Nearest returns the power of two nearest to x on a log scale.
func pow2Nearest(x float64) int {
	return 1 << max(0, int(math.Round(math.Log2(x))))
}

// refineScratch is one worker's state in the refinement pass.
type refineScratch struct {
	wh      whitener
	z, pk   []float32
	sal     []float32
	est, sd []float64
	hs, ord []int
	// centroids of moving lines
	cest, csd []float64
	chs       []int
	prof      []float64 // comb level at q/profileDiv shaft orders
	profN     []int
}

// refine runs the refinement pass along the search path.
// Its default frame is divided by div (1 for the track, 2 for the fine
// track); with div > 1 it returns nil, nil when that frame would be shorter
// than fineMinFrameS.
func (tk *tracker) refine(ctx context.Context, blades, total, div int) (*Track, error) {
	fs := tk.fs
	K := len(tk.grid)
	// The lowest speed on the path sets the frame.
	var voiced []float64
	for _, k := range tk.path {
		if k >= 0 {
			voiced = append(voiced, tk.grid[k])
		}
	}
	fLow := tk.cfg.MinShaftHz
	if len(voiced) > 0 {
		slices.Sort(voiced)
		fLow = voiced[len(voiced)/20]
	}
	rc := tk.cfg.STFT
	if blades == 0 {
		// Reading the blade count: the fundamental found may be the
		// blade-pass line, so resolve shaft lines up to maxReadBlades times
		// lower (this pass's track is not kept).
		fLow = max(fLow/maxReadBlades, tk.cfg.MinShaftHz/2)
		rc = dsp.STFTConfig{}
	}
	if rc.FrameLen == 0 {
		rc.FrameLen = min(pow2Nearest(max(refineCycles*fs/fLow, refineMinFrameS*fs)), tk.search.FrameLen) / div
		if div > 1 && float64(rc.FrameLen) < fineMinFrameS*fs {
			return nil, nil
		}
	}
	if rc.Hop == 0 {
		rc.Hop = max(1, min(rc.FrameLen/4, int(math.Round(refineHopS*fs))))
	}
	// The profile is an average: every profileEvery-th frame, and fewer
	// on long recordings (at most about profileFrames).
	every := max(profileEvery, (len(tk.x)/max(1, rc.Hop))/profileFrames)
	if blades == 0 {
		// Only the comb profile of this pass is used: take just the frames
		// that enter it.
		rc.Hop *= every
		every = 1
	}
	rc = rc.Resolve(fs)
	if rc.FrameLen > len(tk.x) {
		return nil, fmt.Errorf("analysis: frame of %d samples is longer than the recording (%d)", rc.FrameLen, len(tk.x))
	}
	if rc.FFTLen%rc.FrameLen != 0 {
		return nil, fmt.Errorf("analysis: FFT length %d is not a whole multiple of the frame length %d", rc.FFTLen, rc.FrameLen)
	}
	pad := rc.FFTLen / rc.FrameLen
	nf := rc.NumFrames(len(tk.x))
	bins := rc.Bins()
	binHz := fs / float64(rc.FFTLen)
	comb := newCombTable(tk.grid, binHz, bins, blades, combHarmonics).withoutMidCheck()

	tr := &Track{Blades: max(blades, 1), TimeS: make([]float64, nf), ShaftHz: make([]float64, nf),
		SigmaHz: make([]float64, nf), Confidence: make([]float64, nf)}
	tr.Kernel, tr.KernelDtS = hannPowerKernel(rc.FrameLen, fs)

	maxH := refineHarmonics * max(blades, 1)
	workers := rc.Workers
	scratch := make([]refineScratch, workers)
	for w := range scratch {
		s := &scratch[w]
		s.z = make([]float32, bins)
		s.pk = make([]float32, bins)
		s.sal = make([]float32, K)
		s.est = make([]float64, maxH)
		s.sd = make([]float64, maxH)
		s.ord = make([]int, maxH)
		s.hs = make([]int, maxH)
		s.cest = make([]float64, maxH)
		s.csd = make([]float64, maxH)
		s.chs = make([]int, maxH)
		s.prof = make([]float64, profileLen)
		s.profN = make([]int, profileLen)
	}
	sHop := float64(tk.search.Hop)
	span := int(math.Ceil(float64(tk.search.FrameLen+rc.FrameLen) / 2 / sHop))
	nyq := 0.45 * fs
	margin := int(math.Ceil(math.Log(1.03) / comb.logStep))

	err := rc.Process(ctx, tk.x, fs, func(w, i int, re, im []float32) {
		s := &scratch[w]
		t := (float64(i*rc.Hop) + float64(rc.FrameLen)/2) / fs
		tr.TimeS[i] = t
		tr.ShaftHz[i], tr.SigmaHz[i] = math.NaN(), math.NaN()
		// Nearest search frame and the speed range around it.
		c := int(math.Round((t*fs - float64(tk.search.FrameLen)/2) / sHop))
		c = max(0, min(len(tk.path)-1, c))
		if tk.path[c] < 0 {
			return
		}
		klo, khi := K, -1
		for j := max(0, c-span); j <= min(len(tk.path)-1, c+span); j++ {
			if k := int(tk.path[j]); k >= 0 {
				klo, khi = min(klo, k), max(khi, k)
			}
		}
		klo, khi = max(0, klo-margin), min(K, khi+margin+1)
		// Whiten only the bins this frame reads: the combs of the
		// candidates, the harmonics refined (or the profile's orders) of
		// the fastest of them with room for the estimate to move.
		orders := maxH
		if i%every == 0 {
			orders = max(orders, profileLen/profileDiv)
		}
		lim := min(bins, max(comb.readLimit(khi), int(float64(orders)*tk.grid[khi-1]*1.06/binHz)+pad+2))
		s.wh.whitenBelow(s.z, s.pk, re, im, lim)
		comb.salience(s.sal[:khi-klo], s.z, s.pk, klo, khi)
		kb := klo
		for k := klo; k < khi; k++ {
			if s.sal[k-klo] > s.sal[kb-klo] {
				kb = k
			}
		}
		// Refine harmonic by harmonic. Each line is looked for near h times
		// the running estimate and accepted only when it lies within half a
		// natural bin plus three standard errors of it: a line of another
		// comb one or two bins away (another machine in the room) is then
		// left out instead of pulling the estimate onto that comb.
		f0 := tk.grid[kb]
		fRun, sdRun := f0, refineStartRel*f0
		n := 0
		var sw, swf float64
		natBin := binHz * float64(pad)
		for h := 1; h <= maxH; h++ {
			fp := float64(h) * fRun
			if fp > nyq {
				break
			}
			j := int(math.Round(fp / binHz))
			if j-pad < 1 || j+pad >= lim-1 {
				break
			}
			// Highest bin within a natural bin of the prediction.
			jb := j
			for d := -pad; d <= pad; d++ {
				if s.z[j+d] > s.z[jb] {
					jb = j + d
				}
			}
			zj := float64(s.z[jb])
			if zj < refineMinZ || s.z[jb-1] > s.z[jb] || s.z[jb+1] > s.z[jb] {
				continue
			}
			var d float64
			if pad == 1 {
				d = dsp.InterpJacobsenHann(re, im, jb)
			} else {
				d = dsp.InterpJacobsenHannPadded(re, im, jb, pad)
			}
			fh := (float64(jb) + d) * binHz
			if math.Abs(fh-fp) > 0.5*natBin+3*float64(h)*sdRun {
				continue
			}
			sdh := lineSD(zj, natBin, float64(h))
			s.est[n], s.sd[n], s.hs[n] = fh/float64(h), sdh, h
			n++
			wt := 1 / (sdh * sdh)
			sw += wt
			swf += wt * fh / float64(h)
			fRun, sdRun = swf/sw, math.Max(1/math.Sqrt(sw), refineFloorRel*fRun)
		}
		if n == 0 {
			return
		}
		f, sd, ok := poolHarmonics(s.est[:n], s.sd[:n], s.hs[:n], s.ord[:n], binHz*float64(pad))
		if !ok || f < tk.cfg.MinShaftHz*0.97 || f > tk.cfg.MaxShaftHz*1.03 {
			return
		}
		tr.ShaftHz[i], tr.SigmaHz[i] = f, sd
		tr.Confidence[i] = 1 - math.Exp(-math.Max(0, float64(s.sal[kb-klo]))/float64(comb.thr[kb]))
		// Comb profile: the line level matched at each lattice position,
		// from 3 bins and profileMinHz up (below, the floor is unreliable),
		// on one frame in `every` (it is an average).
		if i%every != 0 {
			return
		}
		addProfile(s.prof, s.profN, s.z, s.pk, f, binHz, nyq, lim)
	}, tk.report(total))
	if err != nil {
		return nil, fmt.Errorf("analysis: tracking: %w", err)
	}
	tk.done += nf
	tk.prof = make([]float64, profileLen)
	tk.profN = make([]int, profileLen)
	tk.peaks = nil
	for _, s := range scratch {
		for q := range tk.prof {
			tk.prof[q] += s.prof[q]
			tk.profN[q] += s.profN[q]
		}
	}
	for q := range tk.prof {
		if tk.profN[q] > 0 {
			tk.prof[q] /= float64(tk.profN[q])
		}
	}
	if blades == 0 {
		// The reading pass: its profile is all that is used.
		return tr, nil
	}
	if err := tk.refineMoving(ctx, tr, rc, blades, scratch); err != nil {
		return nil, err
	}
	if err := tk.followJumps(ctx, tr, rc, blades, scratch); err != nil {
		return nil, err
	}
	if err := tk.extendSpinUps(ctx, tr, rc, blades, scratch); err != nil {
		return nil, err
	}
	despikeTrack(tr, despikeHalf)
	msgs, err := tk.voteStretches(ctx, tr, rc, scratch)
	if err != nil {
		return nil, err
	}
	tr.Warnings = append(tr.Warnings, msgs...)
	if nv := tr.validCount(); nv == 0 {
		tr.Warnings = append(tr.Warnings, "no motor found: no harmonic comb stands out of the noise")
	} else if nv < nf {
		tr.Warnings = append(tr.Warnings, fmt.Sprintf("no motor in %d of %d frames (%.0f %%): left empty", nf-nv, nf, 100*float64(nf-nv)/float64(nf)))
	}
	return tr, nil
}

// addProfile adds one frame's comb levels at the profile's lattice
// positions (q/profileDiv times the shaft frequency f), from 3 bins and
// profileMinHz up (below, the floor is unreliable) to nyq and the bins
// whitened (lim).
func addProfile(prof []float64, profN []int, z, pk []float32, f, binHz, nyq float64, lim int) {
	lowest := max(3*binHz, profileMinHz)
	for q := 1; q < profileLen; q++ {
		x := float64(q) / profileDiv * f
		if x > nyq || int(x/binHz+0.5)+1 >= lim {
			break
		}
		if x < lowest {
			continue
		}
		xb := x / binHz
		sg := matchTolerance(xb)
		prof[q] += float64(posValue(z, pk, float32(xb), float32(1/(4*sg*sg))))
		profN[q]++
	}
}

// despikeTrack empties track samples that disagree with their neighbourhood: a
// sample further from the median of the valid samples within ±half frames
// than max(5 robust standard deviations (1.4826·MAD), 2 %) of it, while
// those neighbours agree among themselves. A frame captured for a moment
// by a passing line is then left empty rather than reported; a real step,
// whose neighbourhood spans the change, keeps its samples.
func despikeTrack(tr *Track, half int) {
	n := tr.Len()
	win := make([]float64, 0, 2*half+1)
	dev := make([]float64, 0, 2*half+1)
	bad := make([]bool, n)
	for i := 0; i < n; i++ {
		if !tr.Valid(i) {
			continue
		}
		win = win[:0]
		for j := max(0, i-half); j <= min(n-1, i+half); j++ {
			if j != i && tr.Valid(j) {
				win = append(win, tr.ShaftHz[j])
			}
		}
		if len(win) < half {
			continue
		}
		slices.Sort(win)
		m := win[len(win)/2]
		dev = dev[:0]
		for _, v := range win {
			dev = append(dev, math.Abs(v-m))
		}
		slices.Sort(dev)
		mad := 1.4826 * dev[len(dev)/2]
		if math.Abs(tr.ShaftHz[i]-m) > math.Max(5*mad, despikeRel*m) {
			bad[i] = true
		}
	}
	for i, b := range bad {
		if b {
			tr.ShaftHz[i], tr.SigmaHz[i], tr.Confidence[i] = math.NaN(), math.NaN(), 0
		}
	}
}

// poolHarmonics combines per-harmonic shaft estimates est (f_h/h, with
// standard errors sd, from harmonic orders hs) by inverse variance, after
// rejecting those further from the median than 4 standard errors
// plus a quarter bin in the line's own frequency (binHz/h in shaft units):
// a whine or hum line beside a harmonic pulls that harmonic only. It returns
// the pooled estimate and its standard error, inflated by the scatter when
// the harmonics disagree more than their errors say.
func poolHarmonics(est, sd []float64, hs, ord []int, binHz float64) (f, sigma float64, ok bool) {
	n := len(est)
	for i := range ord {
		ord[i] = i
	}
	slices.SortFunc(ord, func(a, b int) int {
		switch {
		case est[a] < est[b]:
			return -1
		case est[a] > est[b]:
			return 1
		}
		return 0
	})
	// The plain (unweighted) median: one strong interfering line beside a
	// harmonic has the largest weight and must not set the reference.
	med := est[ord[n/2]]
	if n%2 == 0 {
		med = (est[ord[n/2-1]] + est[ord[n/2]]) / 2
	}
	keep := func(i int) bool {
		return math.Abs(est[i]-med) <= 4*sd[i]+0.25*binHz/float64(hs[i])
	}
	var sw, swf float64
	m := 0
	for i := 0; i < n; i++ {
		if !keep(i) {
			continue
		}
		w := 1 / (sd[i] * sd[i])
		sw += w
		swf += w * est[i]
		m++
	}
	if m == 0 {
		return 0, 0, false
	}
	f = swf / sw
	sigma = 1 / math.Sqrt(sw)
	if m > 1 {
		var chi2 float64
		for i := 0; i < n; i++ {
			if keep(i) {
				r := (est[i] - f) / sd[i]
				chi2 += r * r
			}
		}
		if c := chi2 / float64(m-1); c > 1 {
			sigma *= math.Sqrt(c)
		}
	}
	return f, sigma, true
}

// hannPowerKernel returns the normalised w² of a periodic Hann frame of n
// samples, sampled at up to 129 points over the frame, and their spacing.
// A peak-frequency estimate from that frame is, for a slowly varying
// frequency, the w²-weighted mean of the instantaneous frequency
// (reference notes, methods §1.5), and the power centroid of a line that
// moves within the frame is that mean too (refineMoving); checked in
// TestTrackKernel and TestTrackKernelFastSteps.
func hannPowerKernel(n int, fs float64) ([]float64, float64) {
	m := min(n, 128)
	dt := float64(n) / fs / float64(m)
	k := make([]float64, m+1)
	var sum float64
	for j := range k {
		// Continuous Hann over [0, n), w(u) = sin²(πu/n), sampled at the
		// centres of m equal cells (the end points are zero).
		u := float64(j) / float64(m)
		w := math.Pow(math.Sin(math.Pi*u), 4)
		k[j] = w
		sum += w
	}
	for j := range k {
		k[j] /= sum
	}
	return k, dt
}

// refineMoving is the refinement's second pass, over the frames within
// which the speed moves by more than a natural bin at the blade-pass line
// (judged from the first pass's track over the frame). A moving speed
// spreads each line over the bins it crosses, h·[lo, hi]; where that band
// holds no other strong order of the rotor (lineBand), its power centroid,
// floor taken off, is the w²a²-weighted mean of the instantaneous frequency
// (lineCentroid) — what Track.Kernel promises. The first pass's peaks
// follow whichever of the old and new speeds is stronger in the frame, so
// the track lags a fast step and then jumps. The centroids of the clean
// lines replace the frame's sample when one of them shows its line spread
// beyond the main lobe (movedShare, and above the noise); otherwise the
// sample stays.
func (tk *tracker) refineMoving(ctx context.Context, tr *Track, rc dsp.STFTConfig, blades int, scratch []refineScratch) error {
	fs := tk.fs
	nf := tr.Len()
	pad := rc.FFTLen / rc.FrameLen
	binHz := fs / float64(rc.FFTLen)
	natBin := binHz * float64(pad)
	lobeHz := lobeBins * natBin
	b := max(blades, 1)
	half := (rc.FrameLen/2 + rc.Hop - 1) / rc.Hop
	// The first pass's range over each frame, before any sample changes,
	// from its despiked track: a frame captured for a moment by a passing
	// line must not widen the bands.
	ds := &Track{ShaftHz: slices.Clone(tr.ShaftHz), SigmaHz: slices.Clone(tr.SigmaHz),
		Confidence: slices.Clone(tr.Confidence), TimeS: tr.TimeS}
	despikeTrack(ds, despikeHalf)
	lo, hi := make([]float64, nf), make([]float64, nf)
	mark := make([]bool, nf)
	for i := range nf {
		lo[i], hi[i] = math.Inf(1), math.Inf(-1)
		for j := max(0, i-half); j <= min(nf-1, i+half); j++ {
			if ds.Valid(j) {
				lo[i], hi[i] = min(lo[i], ds.ShaftHz[j]), max(hi[i], ds.ShaftHz[j])
			}
		}
		mark[i] = float64(b)*(hi[i]-lo[i]) > natBin
	}
	bins := rc.Bins()
	nyq := 0.45 * fs
	maxH := len(scratch[0].cest)
	zPre, zPost := make([]float32, bins), make([]float32, bins)
	lpPre, lpPost := make([]float32, bins), make([]float32, bins)
	for i := 0; i < nf; {
		if !mark[i] {
			i++
			continue
		}
		j := i
		for j < nf && mark[j] {
			j++
		}
		// The steady frames either side of the run show the lines of other
		// sources that the moving line's bands cross (a tone, hum, another
		// machine): bins with a line in both, away from the rotor's own
		// lines there, are left out of the centroids.
		fPre, fPost := math.NaN(), math.NaN()
		conf := 1.0 // for samples the first pass left empty: the lower of its neighbours'
		if i > 0 && ds.Valid(i-1) {
			conf = min(conf, ds.Confidence[i-1])
			if err := tk.whitenFrame(ctx, rc, i-1, zPre, lpPre, &scratch[0]); err != nil {
				return err
			}
			fPre = ds.ShaftHz[i-1]
		}
		if j < nf && ds.Valid(j) {
			conf = min(conf, ds.Confidence[j])
			if err := tk.whitenFrame(ctx, rc, j, zPost, lpPost, &scratch[0]); err != nil {
				return err
			}
			fPost = ds.ShaftHz[j]
		}
		if math.IsNaN(fPre) && math.IsNaN(fPost) {
			conf = 0
		}
		// Frames [i, j) are samples [i·hop, (j−1)·hop + frame).
		first := i
		x := tk.x[first*rc.Hop : (j-1)*rc.Hop+rc.FrameLen]
		err := rc.Process(ctx, x, fs, func(w, k int, re, im []float32) {
			s := &scratch[w]
			i := first + k
			fa, fb := lo[i]*(1-refineStartRel), hi[i]*(1+refineStartRel)
			s.wh.whiten(s.z, s.pk, re, im)
			nc := 0
			moved := false
			nb := 0 // blade-pass harmonics among the centroids
			for h := 1; h <= maxH && float64(h)*fb+lobeHz < nyq; h++ {
				if h > 2 && h%b != 0 {
					continue
				}
				blo, bhi, clean := lineBand(h, blades, fa, fb, lobeHz)
				if !clean {
					continue
				}
				b0 := max(2, int(math.Floor(blo/binHz)))
				b1 := min(bins-3, int(math.Ceil(bhi/binHz)))
				if b1-b0 <= 2*lobeBins*pad {
					continue
				}
				m := foreignMask{pre: zPre, post: zPost, preOK: !math.IsNaN(fPre), postOK: !math.IsNaN(fPost)}
				m.own(fPre, fPost, h, binHz, lobeBins*pad)
				c, sdBins, mv, ok := lineCentroid(re, im, s.z, b0, b1, lobeBins*pad, &m, levelLaw(lpPre, lpPost, fPre, fPost, h, binHz, pad))
				if !ok {
					continue
				}
				s.cest[nc], s.csd[nc], s.chs[nc] = c*binHz/float64(h), sdBins*binHz/float64(h), h
				nc++
				if h%b == 0 {
					nb++
				}
				moved = moved || mv
			}
			if !moved {
				return
			}
			if nb > 0 && nb < nc {
				// Pool the blade-pass harmonics only: the shaft-order
				// lines are weaker, so other sources' lines in their bands
				// weigh more.
				n := 0
				for q := range nc {
					if s.chs[q]%b == 0 {
						s.cest[n], s.csd[n], s.chs[n] = s.cest[q], s.csd[q], s.chs[q]
						n++
					}
				}
				nc = n
			}
			if f, sd, ok := poolHarmonics(s.cest[:nc], s.csd[:nc], s.chs[:nc], s.ord[:nc], natBin); ok && f > fa && f < fb {
				if !tr.Valid(i) {
					tr.Confidence[i] = conf
				}
				tr.ShaftHz[i], tr.SigmaHz[i] = f, sd
			}
		}, nil)
		if err != nil {
			return fmt.Errorf("analysis: tracking: %w", err)
		}
		i = j
	}
	return nil
}

// lineSD is the standard error, in shaft Hz, of a line of order h found
// z nepers above the floor in frames of natural bin natBin Hz: Jacobsen's
// Hann estimator is within about twice the Cramér–Rao bound (0.1/SNR_bin
// bins², Rife & Boorstyn 1974), hence 0.7/√SNR natural bins.
func lineSD(z, natBin, h float64) float64 {
	snr := math.Max(math.Exp(z)-1, 0.5)
	return 0.7 * natBin / math.Sqrt(snr) / h
}

// setLineSample sets track sample i to shaft frequency f read from one
// line of order b found z nepers above the floor (the walks of
// extendSpinUps and followJumps).
func (t *Track) setLineSample(i int, f, z, natBin, b float64) {
	t.ShaftHz[i], t.SigmaHz[i] = f, lineSD(z, natBin, b)
	t.Confidence[i] = 1 - math.Exp(-z/refineMinZ)
}

// whitenFrames whitens refinement frames [from, to) below nb+1 bins and
// writes each one's first nb bins of z and peak positions, frame after
// frame, into z and pk (grown when short, and returned).
func (tk *tracker) whitenFrames(ctx context.Context, rc dsp.STFTConfig, scratch []refineScratch, from, to, nb int, z, pk []float32) ([]float32, []float32, error) {
	if need := (to - from) * nb; cap(z) < need {
		z, pk = make([]float32, need), make([]float32, need)
	}
	x := tk.x[from*rc.Hop : (to-1)*rc.Hop+rc.FrameLen]
	err := rc.Process(ctx, x, tk.fs, func(w, k int, re, im []float32) {
		s := &scratch[w]
		s.wh.whitenBelow(s.z, s.pk, re, im, nb+1)
		copy(z[k*nb:(k+1)*nb], s.z[:nb])
		copy(pk[k*nb:(k+1)*nb], s.pk[:nb])
	}, nil)
	if err != nil {
		return z, pk, fmt.Errorf("analysis: tracking: %w", err)
	}
	return z, pk, nil
}

// lineWalk holds the scales both walks along the blade-pass line use
// (extendSpinUps, followJumps): the blade count b, the bin width of the
// refinement transform and of its frame without padding (natBin), and
// how many frames the walk may go back and makes a stall.
type lineWalk struct {
	b, binHz, natBin float64
	back, stall      int
}

func (tk *tracker) newLineWalk(rc dsp.STFTConfig, blades int, backS, stallS float64) lineWalk {
	binHz := tk.fs / float64(rc.FFTLen)
	return lineWalk{b: float64(max(blades, 1)), binHz: binHz, natBin: binHz * float64(rc.FFTLen/rc.FrameLen),
		back: max(1, int(backS*tk.fs/float64(rc.Hop))), stall: max(2, int(stallS*tk.fs/float64(rc.Hop)))}
}

// peak returns the bin, among those covering [lo, hi] Hz, of the whitened
// frame's interpolated peak with an excess of at least refineMinZ that ok
// accepts (nil: all) and that better prefers to the one found so far; −1
// when there is none. zr and pr are the frame's excess and peak positions
// (whiten).
func (lw lineWalk) peak(zr, pr []float32, lo, hi float64, ok func(k int) bool, better func(k, kb int) bool) int {
	kb := -1
	for k := max(1, int(math.Floor(lo/lw.binHz))); k <= min(len(zr)-1, int(math.Ceil(hi/lw.binHz))); k++ {
		if pr[k] < 0 || zr[k] < refineMinZ || (ok != nil && !ok(k)) {
			continue
		}
		if kb < 0 || better(k, kb) {
			kb = k
		}
	}
	return kb
}

// Spin-up extension (extendSpinUps).
const (
	// spinUpBackS is how far before a run of track samples the blade-pass
	// line is followed back.
	spinUpBackS = 0.3
	// spinUpStepRel bounds the fall of the speed from one frame to the one
	// before it, going back (a spin-up's steepest part is its start).
	spinUpStepRel = 0.2
	// spinUpStallS and spinUpStallRel: a line followed back that falls by
	// less than spinUpStallRel over spinUpStallS is not a spin-up (a hum
	// or another machine's line), and that part is left empty.
	spinUpStallS   = 0.05
	spinUpStallRel = 0.01
)

// extendSpinUps follows the blade-pass line back from the first sample of
// each run that follows at least spinUpStallS without one: a rotor
// spinning up from standstill is quiet and fast at first (tonal power
// grows about as f⁴, common practice), so the search pass's long frames,
// which smear the rising line over many bins, find it only late. Going back frame by
// frame, the strongest peak of the whitened spectrum (at least refineMinZ)
// within B·[f·(1 − spinUpStepRel), f·1.005] continues the track, f being
// the speed found in the frame after; it stops at a frame without one, at
// MinShaftHz, or where the line stalls (then that stalled part is left
// empty). The peaks are QIFFT positions (whiten), ample on a moving line.
func (tk *tracker) extendSpinUps(ctx context.Context, tr *Track, rc dsp.STFTConfig, blades int, scratch []refineScratch) error {
	nf := tr.Len()
	lw := tk.newLineWalk(rc, blades, spinUpBackS, spinUpStallS)
	b, binHz, natBin, back, stall := lw.b, lw.binHz, lw.natBin, lw.back, lw.stall
	var z, pk []float32 // per frame, bins [0, nb)
	for i0 := 1; i0 < nf; i0++ {
		if !tr.Valid(i0) || tr.Valid(i0-1) {
			continue
		}
		first := i0 - 1
		for first > 0 && !tr.Valid(first-1) && i0-first < back {
			first--
		}
		if i0-first < stall {
			continue
		}
		f := tr.ShaftHz[i0]
		nb := min(rc.Bins()-1, int(b*f*1.01/binHz)+2)
		var err error
		if z, pk, err = tk.whitenFrames(ctx, rc, scratch, first, i0, nb, z, pk); err != nil {
			return err
		}
		// Walk back.
		for i := i0 - 1; i >= first; i-- {
			zr, pr := z[(i-first)*nb:(i-first+1)*nb], pk[(i-first)*nb:(i-first+1)*nb]
			kb := lw.peak(zr, pr, b*f*(1-spinUpStepRel), b*f*1.005, nil, func(k, kb int) bool { return zr[k] > zr[kb] })
			if kb < 0 {
				break
			}
			fn := float64(pr[kb]) * binHz / b
			if fn < tk.cfg.MinShaftHz*0.97 || fn > f*1.005 {
				break
			}
			tr.setLineSample(i, fn, float64(zr[kb]), natBin, b)
			f = fn
			// A stalled line is not a spin-up.
			if j := i + stall; j < i0 && tr.ShaftHz[i] > tr.ShaftHz[j]*(1-spinUpStallRel) {
				for q := i; q <= j; q++ {
					tr.ShaftHz[q], tr.SigmaHz[q], tr.Confidence[q] = math.NaN(), math.NaN(), 0
				}
				break
			}
		}
	}
	return nil
}

// Jump following (followJumps).
const (
	// jumpRel is the least change of ln f between neighbouring samples
	// that counts as a jump of the track.
	jumpRel = 0.04
	// jumpBackS is how far back from a jump the moving line is followed.
	jumpBackS = 0.2
	// jumpStepRel bounds the change of the speed from one frame to the one
	// before it, going back.
	jumpStepRel = 0.1
	// jumpGap is the most empty samples between the two sides of a jump.
	jumpGap = 4
	// jumpSlack is how far the line may move the other way from one frame
	// to the one before it (the sample after a jump is a kernel average
	// that may lie beyond the speed at its centre).
	jumpSlack = 0.03
	// jumpStallS and jumpStallRel: a line followed back that moves by
	// less than jumpStallRel over jumpStallS is not the move.
	jumpStallS   = 0.02
	jumpStallRel = 0.01
)

// followJumps follows the blade-pass line back from each jump of the
// track (across at most jumpGap empty samples) towards the speed before it.
// In a reverberant room the lines of the old speed ring on after a step,
// and on a step down, where the new speed's lines are quieter (tonal power
// grows about as f⁴, common practice), the ringing old line is the
// strongest in the frames of the move: the track holds the old speed, flickers and then jumps to
// the new one, and the move between is lost. Going back frame by frame
// from the sample after the jump, the peak of the whitened spectrum (at
// least refineMinZ) nearest to B·f within B·[f·(1 − jumpSlack),
// f·(1 + jumpStepRel)] towards the old speed continues the line, f the
// speed found in the frame after; the old speed is the farthest one of the
// samples within jumpBackS before the jump (a flickering track passes
// through mixtures of the two), and its line's own lobe is left out. A
// sample that agrees with the line within a natural bin stays as it is (a
// centroid of a moving line is the better estimate); the others take the
// peak. It stops at a frame without a peak or jumpBackS back, and where
// the line stalls: that part is put back as it was if the walk replaced
// most of it (a steady line of another order or source, not a move), and
// kept if the track already followed it there. A step up is followed alike.
func (tk *tracker) followJumps(ctx context.Context, tr *Track, rc dsp.STFTConfig, blades int, scratch []refineScratch) error {
	nf := tr.Len()
	lw := tk.newLineWalk(rc, blades, jumpBackS, jumpStallS)
	b, binHz, natBin, back, stall := lw.b, lw.binHz, lw.natBin, lw.back, lw.stall
	var z, pk []float32
	var saved [][3]float64 // the samples as they were, from i0 − 1 back
	var kept []bool        // whether the walk left them as they were
	for i0 := 1; i0 < nf; i0++ {
		if !tr.Valid(i0) {
			continue
		}
		// The sample before, across a gap of at most jumpGap frames.
		p := i0 - 1
		for p > 0 && i0-p <= jumpGap && !tr.Valid(p) {
			p--
		}
		if !tr.Valid(p) {
			continue
		}
		fNew := tr.ShaftHz[i0]
		if math.Abs(math.Log(fNew/tr.ShaftHz[p])) < jumpRel {
			continue
		}
		rises := fNew < tr.ShaftHz[p] // going back, the speed rises towards the old one
		first := max(0, i0-back)
		fOld := tr.ShaftHz[p]
		for i := first; i < i0; i++ {
			if tr.Valid(i) && (rises == (tr.ShaftHz[i] > fOld)) {
				fOld = tr.ShaftHz[i]
			}
		}
		fHi := math.Max(fNew, fOld) * 1.05
		nb := min(rc.Bins()-1, int(b*fHi/binHz)+2)
		oldLo, oldHi := b*fOld-2*natBin, b*fOld+2*natBin
		f := fNew
		saved, kept = saved[:0], kept[:0]
		// Frames are whitened in chunks, going back, as the walk needs them.
		const chunk = 16
		c0, c1 := i0, i0 // frames [c0, c1) are in z, pk
		for i := i0 - 1; i >= first; i-- {
			if i < c0 {
				c1, c0 = c0, max(first, c0-chunk)
				var err error
				if z, pk, err = tk.whitenFrames(ctx, rc, scratch, c0, c1, nb, z, pk); err != nil {
					return err
				}
			}
			zr, pr := z[(i-c0)*nb:(i-c0+1)*nb], pk[(i-c0)*nb:(i-c0+1)*nb]
			var lo, hi float64
			if rises {
				lo, hi = b*f*(1-jumpSlack), b*min(fOld, f*(1+jumpStepRel))
			} else {
				lo, hi = b*max(fOld, f*(1-jumpStepRel)), b*f*(1+jumpSlack)
			}
			kb := lw.peak(zr, pr, lo, hi, func(k int) bool {
				q := float64(pr[k]) * binHz
				return q >= lo && q <= hi && !(q > oldLo && q < oldHi)
			}, func(k, kb int) bool {
				return math.Abs(float64(pr[k])*binHz-b*f) < math.Abs(float64(pr[kb])*binHz-b*f)
			})
			if kb < 0 {
				break
			}
			fn := float64(pr[kb]) * binHz / b
			saved = append(saved, [3]float64{tr.ShaftHz[i], tr.SigmaHz[i], tr.Confidence[i]})
			agrees := tr.Valid(i) && math.Abs(tr.ShaftHz[i]-fn) < natBin/b
			kept = append(kept, agrees)
			if agrees {
				fn = tr.ShaftHz[i]
			} else {
				tr.setLineSample(i, fn, float64(zr[kb]), natBin, b)
			}
			f = fn
			// A line that does not move towards the old speed is not the
			// move (another order or another source): that part is put
			// back as it was.
			if j := i + stall; j < i0 && math.Abs(math.Log(f/tr.ShaftHz[j])) < jumpStallRel {
				// Where the track already followed that line, the walk has
				// only met it (and mended what lay off it on the way).
				n := 0
				for q := i; q <= j; q++ {
					if kept[i0-1-q] {
						n++
					}
				}
				if 2*n <= j-i+1 {
					for q := i; q <= j; q++ {
						o := saved[i0-1-q]
						tr.ShaftHz[q], tr.SigmaHz[q], tr.Confidence[q] = o[0], o[1], o[2]
					}
				}
				break
			}
		}
	}
	return nil
}

// whitenFrame writes the whitened spectrum of refinement frame i to dst
// and its ln power to lnP.
func (tk *tracker) whitenFrame(ctx context.Context, rc dsp.STFTConfig, i int, dst, lnP []float32, s *refineScratch) error {
	x := tk.x[i*rc.Hop : i*rc.Hop+rc.FrameLen]
	err := rc.Process(ctx, x, tk.fs, func(_, _ int, re, im []float32) {
		s.wh.whiten(dst, s.pk, re, im)
		copy(lnP, s.wh.lnP)
	}, nil)
	if err != nil {
		return fmt.Errorf("analysis: tracking: %w", err)
	}
	return nil
}

// foreignMask marks the bins of another source's lines: a line (excess
// above foreignZ) in the steady frames on both sides of a moving run (or
// the one side there is), away from the rotor's own line of the order at
// hand in that frame ([preLo, preHi], [postLo, postHi]).
type foreignMask struct {
	pre, post      []float32
	preOK, postOK  bool
	preLo, preHi   int
	postLo, postHi int
}

// foreignZ is the excess (nepers, as refineMinZ) that marks a line in the
// steady frames.
const foreignZ = refineMinZ

// own sets the rotor's own line of order h in the steady frames.
func (m *foreignMask) own(fPre, fPost float64, h int, binHz float64, lobe int) {
	if m.preOK {
		c := int(math.Round(float64(h) * fPre / binHz))
		m.preLo, m.preHi = c-lobe, c+lobe
	}
	if m.postOK {
		c := int(math.Round(float64(h) * fPost / binHz))
		m.postLo, m.postHi = c-lobe, c+lobe
	}
}

// foreign reports whether bin k holds another source's line.
func (m *foreignMask) foreign(k int) bool {
	if m == nil || (!m.preOK && !m.postOK) {
		return false
	}
	if m.preOK && (m.pre[k] < foreignZ || (k >= m.preLo && k <= m.preHi)) {
		return false
	}
	if m.postOK && (m.post[k] < foreignZ || (k >= m.postLo && k <= m.postHi)) {
		return false
	}
	return true
}

// Moving-line centroid (refine).
const (
	// lobeBins is the half width of a Hann main lobe in natural bins.
	lobeBins = 2
	// movedShare is the share of a band's excess power outside its peak's
	// main lobe above which the line counts as moving within the frame.
	movedShare = 0.02
	// centroidMinSNR is the least excess power of a band, in units of its
	// mean floor per bin, for a centroid (e^2.1, as refineMinZ).
	centroidMinSNR = 8.2
)

// levelExponent is p in the amplitude law a ∝ f^p of a rotor's tonal
// lines where the steady frames around a move cannot tell it (2: tonal
// sound pressure about ∝ the square of speed; common practice, from
// memory); maxLevelExponent bounds a measured one.
const (
	levelExponent    = 2
	maxLevelExponent = 4
)

// levelLaw returns p for order h from the steady frames either side of a
// move: the ln energy of the line at h·fPre before and h·fPost after (over
// its main lobe, pad FFT bins per natural bin), p = Δln P / (2·ln(fPost/fPre)), within
// [0, maxLevelExponent]; levelExponent when a side is missing or the
// speeds differ by less than 5 %.
func levelLaw(lpPre, lpPost []float32, fPre, fPost float64, h int, binHz float64, pad int) float64 {
	if math.IsNaN(fPre) || math.IsNaN(fPost) || math.Abs(math.Log(fPost/fPre)) < math.Log(1.05) {
		return levelExponent
	}
	// The line's energy over its main lobe, free of the scalloping of a
	// single bin (Parseval).
	peak := func(lp []float32, f float64) float64 {
		c := int(math.Round(float64(h) * f / binHz))
		if c < lobeBins*pad || c+lobeBins*pad >= len(lp) {
			return math.NaN()
		}
		var e float64
		for k := c - lobeBins*pad; k <= c+lobeBins*pad; k++ {
			e += math.Exp(float64(lp[k]))
		}
		return math.Log(e)
	}
	a, b := peak(lpPre, fPre), peak(lpPost, fPost)
	if math.IsNaN(a) || math.IsNaN(b) {
		return levelExponent
	}
	return max(0, min(maxLevelExponent, (b-a)/(2*math.Log(fPost/fPre))))
}

// levelWeight returns r^(−2p): the inverse of the power growth over a
// frequency ratio r.
func levelWeight(r, p float64) float64 {
	if p == 2 {
		r2 := r * r
		return 1 / (r2 * r2)
	}
	return math.Pow(r, -2*p)
}

// lineBand returns the band h·[fa, fb] ± lobeHz of shaft order h and
// whether it is clean: free of the other orders that are strong on a rotor,
// the blade-pass harmonics (multiples of blades) and, for a shaft-order
// line, the first two shaft orders (imbalance and blade-to-blade
// differences; common practice). A blade-pass harmonic dominates the first
// two shaft orders: where their ranges reach only the margin of its band,
// the band is cut back to leave them out; where they cross its own range,
// they pull its centroid by their share of the power.
func lineBand(h, blades int, fa, fb, lobeHz float64) (lo, hi float64, clean bool) {
	b := max(blades, 1)
	lo, hi = float64(h)*fa-lobeHz, float64(h)*fb+lobeHz
	core0, core1 := float64(h)*fa, float64(h)*fb
	for m := 1; float64(m)*fa-lobeHz < hi; m++ {
		if m == h || (m%b != 0 && m > 2) {
			continue
		}
		mlo, mhi := float64(m)*fa-lobeHz, float64(m)*fb+lobeHz
		if mhi <= lo || mlo >= hi {
			continue
		}
		if m%b == 0 || h%b != 0 {
			return lo, hi, false
		}
		// A weak shaft order beside a blade-pass harmonic: cut the band
		// back where it only reaches the margin, accept its share where it
		// crosses the harmonic's own range.
		switch {
		case m < h && mhi < core0:
			lo = mhi
		case m > h && mlo > core1:
			hi = mlo
		}
	}
	return lo, hi, true
}

// lineCentroid returns the power centroid, in FFT bins, of bins [k1, k2]
// with each bin's noise floor taken off (P·(1 − e^−z), z = ln(P/floor)),
// its standard error (the band's spectral spread over the square root of
// its excess power in units of the floor), and whether the line moved
// within the frame: more than movedShare of the excess power lies outside
// ±lobe bins of the band's strongest bin. The centroid of |X|² over a line
// is the w²a²-weighted mean of its instantaneous frequency over the frame
// (the first frequency moment of the spectrogram: L. Cohen, Time-Frequency
// Analysis, Prentice Hall 1995 (from memory)); for a steady Hann line its
// bias over ±3 bins is below 2e-4 bin (simulated here). ok is false when
// the band's excess is below centroidMinSNR. Bins that mask marks as
// another source's (mask may be nil) are left out.
func lineCentroid(re, im, z []float32, k1, k2, lobe int, mask *foreignMask, p float64) (c, sd float64, moved, ok bool) {
	// The floor is interpolated (in log) between the whitener's floors just
	// outside the band, or the whitener's own where lower: a line spread
	// over many bins lifts the block quantiles under it. The excess is
	// signed, so that noise bins below the floor cancel those
	// above and do not pull the centroid to the band's middle.
	floorAt := func(k int) float64 {
		p := float64(re[k])*float64(re[k]) + float64(im[k])*float64(im[k])
		return p * math.Exp(-float64(z[k]))
	}
	lf0, lf1 := math.Log(floorAt(k1-1)), math.Log(floorAt(k2+1))
	floor := func(k int) float64 {
		a := float64(k-k1+1) / float64(k2-k1+2)
		return min(floorAt(k), math.Exp(lf0+(lf1-lf0)*a))
	}
	kp := k1
	for k := k1; k <= k2; k++ {
		if z[k] > z[kp] && !mask.foreign(k) {
			kp = k
		}
	}
	// A rotor's lines grow louder with speed, amplitude about ∝ f^p
	// (levelLaw): each bin's excess is divided by that growth, so that the centroid weighs
	// the frame's instants by w² alone, as Track.Kernel says.
	kc := float64(k1+k2) / 2
	var sp, skp, sfl float64
	for k := k1; k <= k2; k++ {
		if mask.foreign(k) {
			continue
		}
		g := levelWeight(float64(k)/kc, p)
		fl := floor(k)
		e := (float64(re[k])*float64(re[k]) + float64(im[k])*float64(im[k]) - fl) * g
		sp += e
		skp += e * float64(k)
		sfl += fl * g
	}
	if !(sp > 0) || sp < centroidMinSNR*sfl/float64(k2-k1+1) {
		return 0, 0, false, false
	}
	c = skp / sp
	// Variance of each bin's excess: fl² (noise alone) + 2·fl·e (line
	// times noise), propagated to the centroid.
	var v, in, vOut float64
	for k := k1; k <= k2; k++ {
		if mask.foreign(k) {
			continue
		}
		g := levelWeight(float64(k)/kc, p)
		fl := floor(k)
		e := float64(re[k])*float64(re[k]) + float64(im[k])*float64(im[k]) - fl
		vk := g * g * fl * (fl + 2*max(e, 0))
		e *= g
		d := float64(k) - c
		v += d * d * vk
		if k >= kp-lobe && k <= kp+lobe {
			in += e
		} else {
			vOut += g * g * fl * fl // noise alone: is the spread real?
		}
	}
	out := sp - in
	moved = out > movedShare*sp && out > 3*math.Sqrt(vOut)

	return c, math.Sqrt(v) / sp, moved, true
}
