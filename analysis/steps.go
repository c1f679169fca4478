package analysis

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sort"
	"sync"
)

// StepConfig tunes step detection and fitting. Its zero value means
// defaults.
type StepConfig struct {
	// CommandTimesS are throttle command times in seconds (given by the
	// user or found on a trigger channel). When present, exactly these
	// steps are fitted and dead time is measured from them; otherwise
	// steps are detected on the track and no dead time is reported.
	CommandTimesS []float64
	// Bootstrap is the number of moving-block bootstrap replicates used to
	// cross-check each step's intervals (0: default 100; negative: none).
	Bootstrap int
	// Seed seeds the bootstrap (0 is a valid seed).
	Seed uint64
	// MinChangeFraction is the smallest speed change, as a fraction of the
	// speed before it, that detection reports as a step (default 0.05).
	MinChangeFraction float64
	// MaxRiseS is the longest 10–90 % transition that detection still
	// calls a step; slower changes are ramps (default 0.6 s).
	MaxRiseS float64
	// MaxDeadTimeS bounds the dead time searched after each command time
	// (default 0.1 s; a motor and its speed controller answer within tens
	// of milliseconds, and a wider search lets a stretch of tracker
	// trouble after the step pass for its start).
	MaxDeadTimeS float64
}

func (c StepConfig) withDefaults() StepConfig {
	if c.Bootstrap == 0 {
		c.Bootstrap = 100
	}
	if c.MinChangeFraction <= 0 {
		c.MinChangeFraction = 0.05
	}
	if c.MaxRiseS <= 0 {
		c.MaxRiseS = 0.6
	}
	if c.MaxDeadTimeS <= 0 {
		c.MaxDeadTimeS = 0.1
	}
	return c
}

// Fit windows (common practice): at least this much track before the onset
// and at most this much after it.
const (
	preWindowS     = 0.12
	maxPostWindowS = 1.5
	postWindowTaus = 12
	minPostWindowS = 0.3
	settledTaus    = 4
	// fineTauKernels and fineSameSpeed rule fineAlternative: refit on
	// the fine track under five kernel standard deviations (the end-to-end
	// sweep's errors grow below that ratio), keep the refit when its
	// speeds before and after agree within a tenth of the change.
	fineTauKernels  = 5
	fineSameSpeed   = 0.1
	poorR2          = 0.9
	poorRelativeRMS = 0.08
)

// AnalyseSteps finds the throttle steps on a track (or takes them from
// cfg.CommandTimesS) and fits each with the window-aware FOPDT model. It
// returns the steps in time order and file-level warnings.
func AnalyseSteps(tr *Track, cfg StepConfig) ([]StepResult, []string) {
	cfg = cfg.withDefaults()
	var warns []string
	if tr == nil || tr.Len() < 8 {
		return nil, []string{"the track is too short to look for steps"}
	}
	hop := trackHop(tr)
	if !(hop > 0) {
		return nil, []string{"the track's sample times are not increasing; no steps fitted"}
	}
	k := newFOPDTKernel(tr.Kernel, tr.KernelDtS)

	var plans []stepPlan
	if len(cfg.CommandTimesS) > 0 {
		cmds := cleanTimes(cfg.CommandTimesS)
		t0, t1 := tr.TimeS[0], tr.TimeS[tr.Len()-1]
		for _, c := range cmds {
			if c < t0-preWindowS || c > t1-4*hop {
				warns = append(warns, fmt.Sprintf("command time %.3f s is outside the track (%.3f–%.3f s); ignored", c, t0, t1))
				continue
			}
			plans = append(plans, stepPlan{commandS: c, onsetLo: c, onsetHi: c + cfg.MaxDeadTimeS})
		}
		planWindows(plans, tr, &k)
		for i := range plans {
			markStandstill(&plans[i], tr)
		}
		if len(plans) > 0 {
			markBehindLine(&plans[0], tr, &k, cfg)
		}
	} else {
		var dw []string
		plans, dw = detectSteps(tr, &k, cfg)
		warns = append(warns, dw...)
		if len(plans) == 0 {
			warns = append(warns, "no throttle step found in the track")
		}
	}

	out, from, fitWarns := fitPlans(tr, &k, hop, plans, cfg)
	if len(cfg.CommandTimesS) == 0 {
		// A transition detected twice is kept once; the surviving step is
		// then fitted again, since the duplicate had cut its fit stretch.
		drop, mergeWarns := mergeWithinRise(out, from, k.spanS())
		if len(drop) > 0 {
			var kept []stepPlan
			for i, p := range plans {
				if !drop[i] {
					kept = append(kept, p)
				}
			}
			plans = kept
			planWindows(plans, tr, &k)
			limitDetectedWindows(plans)
			out, from, fitWarns = fitPlans(tr, &k, hop, plans, cfg)
			drop, _ = mergeWithinRise(out, from, k.spanS())
			var final []StepResult
			for j := range out {
				if !drop[from[j]] {
					final = append(final, out[j])
				}
			}
			out = final
		}
		warns = append(warns, mergeWarns...)
	}
	return useFine(out), append(warns, fitWarns...)
}

// useFine puts each step's refit on the fine track (fineAlternative), where
// there is one, in its place, keeping the steps in time order.
func useFine(out []StepResult) []StepResult {
	for i := range out {
		if f := out[i].fine; f != nil {
			out[i] = *f
		}
	}
	sort.SliceStable(out, func(a, b int) bool { return out[a].ResponseStartS < out[b].ResponseStartS })
	return out
}

// fitPlans fits every plan and returns the results in time order, the plan
// each came from, and the warnings about plans not fitted or not taken as
// steps.
func fitPlans(tr *Track, k *fopdtKernel, hop float64, plans []stepPlan, cfg StepConfig) ([]StepResult, []int, []string) {
	var warns []string
	var out []StepResult
	var from []int
	// The steps are fitted independently (each reads the track and the
	// kernel only and writes its own plan), so on all cores; the results
	// are taken in plan order, as if fitted one after another.
	ksd := k.sdS()
	results := make([]*StepResult, len(plans))
	errs := make([]error, len(plans))
	var wg sync.WaitGroup
	next := make(chan int)
	for range min(len(plans), runtime.GOMAXPROCS(0)) {
		wg.Go(func() {
			for i := range next {
				on := tr
				if p := &plans[i]; p.heldToS > p.heldFromS {
					on = withoutStretch(tr, p.heldFromS, p.heldToS)
				}
				results[i], errs[i] = fitPlan(on, k, hop, &plans[i], cfg, uint64(i))
				res := results[i]
				if errs[i] == nil && plans[i].hasCommand() && !plans[i].standstill && res.DeadTimeS != nil && res.DeadTimeS.Value > 0.5*(plans[i].onsetHi-plans[i].commandS) {
					if alt := standstillAlternative(tr, k, hop, plans[i], res, cfg, uint64(i)); alt != nil {
						results[i] = alt
						continue
					}
				}
				if errs[i] != nil {
					continue
				}
				// Taken in at the end (useFine): detection's tests read the
				// track's own fit.
				res.fine = fineAlternative(tr, ksd, plans[i], res, cfg, uint64(i))
				if res.fine == nil && plans[i].hasCommand() && plans[i].heldToS <= plans[i].heldFromS {
					// (The fine track holds the old line too: no refit on it.)
					if alt, q := heldAlternative(tr, k, hop, plans[i], res, cfg, uint64(i)); alt != nil {
						results[i], plans[i] = alt, q
					}
				}
			}
		})
	}
	for i := range plans {
		next <- i
	}
	close(next)
	wg.Wait()
	for i := range plans {
		res, err := results[i], errs[i]
		if err != nil {
			if plans[i].hasCommand() {
				warns = append(warns, fmt.Sprintf("step at %.3f s not fitted: %v", plans[i].anchor(), err))
			}
			continue
		}
		if !plans[i].hasCommand() {
			if plans[i].sharp && res.TauS.Value <= tauMinS*1.01 {
				res.Warnings = append(res.Warnings, "the track jumps here faster than the analysis window lets any change of speed through (the tracker probably caught the new speed late); the time constant cannot be read from it")
			}
			if why := notAStep(res, &plans[i], cfg); why != "" {
				warns = append(warns, fmt.Sprintf("a change near %.2f s was not taken as a step: %s", res.ResponseStartS, why))
				continue
			}
		}
		out = append(out, *res)
		from = append(from, i)
	}
	order := make([]int, len(out))
	for j := range order {
		order[j] = j
	}
	sort.SliceStable(order, func(a, b int) bool { return out[order[a]].ResponseStartS < out[order[b]].ResponseStartS })
	sorted := make([]StepResult, len(out))
	sortedFrom := make([]int, len(out))
	for j, o := range order {
		sorted[j], sortedFrom[j] = out[o], from[o]
	}
	return sorted, sortedFrom, warns
}

// mergeWithinRise drops a detected step that starts, in the same
// direction, while the step before it is still rising (within two of its
// time constants plus the window's span) and with a like time constant
// (within a factor of two): detection saw one transition twice, the second
// time part-way up.
func mergeWithinRise(out []StepResult, from []int, spanS float64) (drop map[int]bool, warns []string) {
	last := -1 // the last step kept
	for j, r := range out {
		if last >= 0 {
			q := out[last]
			ratio := r.TauS.Value / q.TauS.Value
			if q.Direction == r.Direction && r.ResponseStartS < q.ResponseStartS+2*q.TauS.Value+spanS && ratio > 0.5 && ratio < 2 {
				if drop == nil {
					drop = map[int]bool{}
				}
				drop[from[j]] = true
				warns = append(warns, fmt.Sprintf("a change near %.2f s lies within the rise of the step at %.2f s; taken as part of it", r.ResponseStartS, q.ResponseStartS))
				continue
			}
		}
		last = j
	}
	return drop, warns
}

// notAStep says why a detected change, once fitted, is not reported as a
// throttle step ("" when it is one): the first-order model must describe
// it, with a time constant inside the search range (a fit that runs to the
// bottom of the range is a jump of the tracker to another line, which the
// window-smoothed model cannot follow), and the change must be
// significant, large enough and fast enough.
func notAStep(r *StepResult, p *stepPlan, cfg StepConfig) string {
	level := math.Max(math.Abs(r.RPMBefore.Value), math.Abs(r.RPMAfter.Value))
	switch {
	case r.R2 < detectMinR2:
		return fmt.Sprintf("a first-order step does not describe it (R² = %.2f)", r.R2)
	case r.TauS.Value >= tauMaxS*0.999:
		return "its time constant ran to the limit of the search"
	case r.TauS.Value <= tauMinS*1.01 && !p.sharp:
		return "it is sharper than any first-order change seen through the analysis window (a tracking jump)"
	case math.Abs(r.DeltaRPM.Value) < cfg.MinChangeFraction*level:
		return fmt.Sprintf("the change of %.0f rpm is below %.0f %% of the speed", math.Abs(r.DeltaRPM.Value), 100*cfg.MinChangeFraction)
	case r.DeltaRPM.CI95[0] <= 0 && r.DeltaRPM.CI95[1] >= 0:
		return "the change is not significant"
	case r.Rise1090S.Value > cfg.MaxRiseS && !p.standstill:
		return fmt.Sprintf("it rises too slowly for a step (10–90 %% in %.2f s)", r.Rise1090S.Value)
	}
	return ""
}

// detectMinR2 is the smallest R² of a detected step's fit.
const detectMinR2 = 0.9

// stepPlan is a step to fit: where its onset may lie and which stretch of
// the track belongs to it.
type stepPlan struct {
	commandS         float64 // NaN when not known
	onsetLo, onsetHi float64
	fromS, toS       float64
	standstill       bool // starts from standstill: r0 = 0
	notes            []string
	// Detection only: the direction, the time the track reached 90 %, and
	// whether the track jumps to a lasting new level faster than the
	// window allows (a step the tracker caught late).
	up    bool
	t90   float64
	sharp bool
	// heldFromS..heldToS: samples where the tracker held the old line
	// after the rotor had left it; left out of the fit (both 0: none).
	heldFromS, heldToS float64
	// seenFromS: a detected start from standstill uses the track only from
	// here on (where the rotor first shows); 0 when not set.
	seenFromS float64
}

func (p *stepPlan) anchor() float64 {
	if !math.IsNaN(p.commandS) {
		return p.commandS
	}
	return (p.onsetLo + p.onsetHi) / 2
}

func (p *stepPlan) hasCommand() bool { return !math.IsNaN(p.commandS) }

// planWindows sets each plan's fit stretch: from a little before its onset
// range (but not before the previous step's response has mostly passed) to
// just before the next step starts to show in the track.
func planWindows(plans []stepPlan, tr *Track, k *fopdtKernel) {
	tEnd := tr.TimeS[tr.Len()-1]
	for i := range plans {
		p := &plans[i]
		p.fromS = p.onsetLo - math.Max(preWindowS, 1.5*k.spanS())
		if i > 0 {
			prev := plans[i-1].onsetLo
			p.fromS = math.Max(p.fromS, prev+0.6*(p.onsetLo-prev))
		}
		p.toS = math.Min(tEnd, p.onsetLo+maxPostWindowS)
		if i+1 < len(plans) {
			// A sample at t sees the trajectory up to t + k.right.
			p.toS = math.Min(p.toS, plans[i+1].onsetLo-k.right-trackHop(tr)/2)
		}
		p.onsetHi = math.Min(p.onsetHi, p.onsetLo+0.6*(p.toS-p.onsetLo))
		if p.onsetHi < p.onsetLo {
			p.onsetHi = p.onsetLo
		}
	}
}

// standstillAlternative refits a commanded step whose dead time came out
// longer than half the search as a start from standstill seen late: before the
// rotor is loud enough the tracker may follow another steady sound (a
// second machine, hum), which looks like a plateau, and it joins the rotor
// only where the rising speed crosses that sound's line. The refit holds
// r0 at 0 and uses only the track after that join (an exponential rise is
// the same curve from any point on, so the onset follows from where and
// how steeply the visible part rises). It returns nil when that does not
// explain the track better: the onset must then lie well inside the
// search, at most half as late as the first fit's, and the fit must
// describe the rise. The line before may lie above
// the rotor's (then the first fit even calls the step a fall).
func standstillAlternative(tr *Track, k *fopdtKernel, hop float64, p stepPlan, res *StepResult, cfg StepConfig, stepNo uint64) *StepResult {
	q := p
	q.standstill = true
	q.notes = append([]string(nil), p.notes...)
	q.fromS = res.ResponseStartS + k.right + hop
	if q.toS-q.fromS < minPostWindowS/2 {
		return nil
	}
	alt, err := fitPlan(tr, k, hop, &q, cfg, stepNo)
	if err != nil || alt.DeadTimeS == nil || alt.R2 < detectMinR2 || alt.DeltaRPM.Value <= 0 {
		return nil
	}
	if th := alt.DeadTimeS.Value; th >= 0.9*(p.onsetHi-p.commandS) || th > res.DeadTimeS.Value/2 {
		return nil
	}
	alt.Warnings = append(alt.Warnings, fmt.Sprintf("taken as a start from standstill: the track holds %.0f rpm until %.3f s, later than a motor answers, and then rises as a spin-up from 0 rpm would; the steady line before is taken as another sound the tracker followed while the rotor stood still", res.RPMBefore.Value, res.ResponseStartS))
	return alt
}

// heldAlternative refits a commanded step where the track held the old
// speed after the command and then jumped, as when the old line rings on
// in a room (common practice, as for heldBefore) and the tracker follows
// it until the rotor's moving line outsounds it: the last sample still within heldNear of the change from
// the old speed, at least half the window's span after the command, is
// followed at once by one further away than heldJump of the change and
// than 1.5 times the most that the window lets even an instantaneous
// change move two samples that far apart (fopdtKernel.maxMass): a jump of
// that size is the tracker's. The samples from the command to there that
// sit at the old speed (within heldShare) are left out and the step
// refitted; where the track moved away and came back, the moves stay. The
// onset then follows from where the visible part of the transition starts
// and how it rises. It returns nil (and p) when there is no such hold,
// when the refit's time constant is at the floor of the search, its R² is
// below detectMinR2, or its speeds before and after differ from the first
// fit's by more than fineSameSpeed of the change.
func heldAlternative(tr *Track, k *fopdtKernel, hop float64, p stepPlan, res *StepResult, cfg StepConfig, stepNo uint64) (*StepResult, stepPlan) {
	r0, r1 := ShaftHz(res.RPMBefore.Value), ShaftHz(res.RPMAfter.Value)
	change := r1 - r0
	if !(math.Abs(change) > 0) {
		return nil, p
	}
	held := -1
	i0 := indexAt(tr.TimeS, p.commandS)
	for i := i0; i < tr.Len() && tr.TimeS[i] <= p.toS; i++ {
		if !tr.Valid(i) {
			continue
		}
		if math.Abs(tr.ShaftHz[i]-r0) >= 0.5*math.Abs(change) {
			break
		}
		if math.Abs(tr.ShaftHz[i]-r0) <= heldNear*math.Abs(change) {
			held = i
		}
	}
	if held < 0 || tr.TimeS[held]-p.commandS < k.spanS()/2 {
		return nil, p
	}
	next := held + 1
	for next < tr.Len() && !tr.Valid(next) {
		next++
	}
	if next >= tr.Len() || next-held > 2 {
		return nil, p
	}
	jumpMin := math.Max(heldJump, 1.5*k.maxMass(tr.TimeS[next]-tr.TimeS[held]))
	if math.Abs(tr.ShaftHz[next]-tr.ShaftHz[held]) < jumpMin*math.Abs(change) {
		return nil, p
	}
	// Only the samples at the old speed are left out: where the track
	// moved away and came back, the moves are the rotor's.
	on := withoutSamples(tr, func(i int) bool {
		return i >= i0 && i <= held && math.Abs(tr.ShaftHz[i]-r0) <= heldShare*math.Abs(change)
	})
	q := p
	q.notes = append(append([]string(nil), p.notes...), fmt.Sprintf("the tracker held the old speed between %.3f and %.3f s and then jumped (the old line ringing on in the room, typically); the samples at the old speed there are left out of the fit", p.commandS, tr.TimeS[held]))
	alt, err := fitPlan(on, k, hop, &q, cfg, stepNo)
	if err != nil || alt.TauS.Value <= tauMinS*1.01 || alt.R2 < detectMinR2 || !sameSpeeds(alt, res) {
		return nil, p
	}
	return alt, q
}

// heldNear, heldShare, heldJump: see heldAlternative.
const (
	heldNear  = 0.2
	heldShare = 0.1
	heldJump  = 0.4
)

// fineAlternative refits a step on the fine track (Track.fine) when its
// time constant is short for the track's kernel: under fineTauKernels
// kernel standard deviations, where the line's peak no longer moves as
// the kernel-weighted mean of the speed and the fit's model of the track
// reads τ off by several per cent. The refit is taken when it finds the
// same speeds before and after (within fineSameSpeed of the change), and
// its τ is short for the track's kernel too; otherwise nil.
func fineAlternative(tr *Track, ksd float64, p stepPlan, res *StepResult, cfg StepConfig, stepNo uint64) *StepResult {
	ft := tr.fine
	if ft == nil || ft.Len() < 8 || !(res.TauS.Value < fineTauKernels*ksd) {
		return nil
	}
	hop := trackHop(ft)
	if !(hop > 0) {
		return nil
	}
	kf := newFOPDTKernel(ft.Kernel, ft.KernelDtS)
	on := ft
	if p.heldToS > p.heldFromS {
		on = withoutStretch(ft, p.heldFromS, p.heldToS)
	}
	alt, err := fitPlan(on, &kf, hop, &p, cfg, stepNo)
	if err != nil {
		return nil
	}
	if !sameSpeeds(alt, res) || !(alt.TauS.Value < fineTauKernels*ksd) || alt.TauS.Value <= tauMinS*1.01 {
		return nil
	}
	return alt
}

// sameSpeeds reports whether a refit alt finds the speeds before and after
// the step that res found, within fineSameSpeed of res's change.
func sameSpeeds(alt, res *StepResult) bool {
	change := math.Abs(res.RPMAfter.Value - res.RPMBefore.Value)
	return math.Abs(alt.RPMBefore.Value-res.RPMBefore.Value) <= fineSameSpeed*change &&
		math.Abs(alt.RPMAfter.Value-res.RPMAfter.Value) <= fineSameSpeed*change
}

// markStandstill treats a commanded step with no motor in the track before
// its command (NaN: the rotor is silent because it is stopped) as a start
// from standstill, r0 = 0.
func markStandstill(p *stepPlan, tr *Track) {
	valid, firstValid := 0, math.NaN()
	for i, t := range tr.TimeS {
		if t >= p.fromS && t < p.commandS && tr.Valid(i) {
			valid++
		}
		if t >= p.commandS && tr.Valid(i) && math.IsNaN(firstValid) {
			firstValid = tr.ShaftHz[i]
		}
	}
	if valid >= 3 || math.IsNaN(firstValid) {
		return
	}
	p.standstill = true
	p.notes = append(p.notes, fmt.Sprintf("no motor in the track before the command: a start from standstill, the speed before is taken as 0 rpm; the tracker saw the rise only from %.0f rpm", RPM(firstValid)))
}

// markBehindLine treats the first commanded step as a start from
// standstill when what the track holds at its start is not the rotor (no
// comb, mains hum or another steady line: leadingNotRotor) until after
// the dead-time search (a motor that answers the command leaves its line
// within it), and the track rises where it leaves it: the rotor spun up
// behind that sound and was found only once it outsounded it. Only the
// track after that is fitted, with r0 = 0.
func markBehindLine(p *stepPlan, tr *Track, k *fopdtKernel, cfg StepConfig) {
	if p.standstill {
		return
	}
	sc := newDetectScales(tr, k)
	lead := leadingNotRotor(tr, sc.hop)
	if lead <= 0 || lead >= tr.Len() || tr.TimeS[lead] <= p.commandS+cfg.MaxDeadTimeS {
		return
	}
	ym, _, first, ok := sc.spinUpAfter(tr, lead, cfg.MinChangeFraction)
	if !ok || tr.TimeS[first]+k.right > p.toS-minPostWindowS/2 {
		return
	}
	p.standstill = true
	p.fromS = tr.TimeS[first] + k.right
	p.notes = append(p.notes, fmt.Sprintf("taken as a start from standstill: until %.3f s the track holds another sound (no harmonic comb stands out, or mains hum or another steady line), then rises from %.0f rpm as a spin-up does; only the track after it is fitted", tr.TimeS[first], RPM(ym[first])))
}

// withoutStretch returns a copy of tr whose samples in [from, to] are NaN
// (no motor found), the other fields shared.
func withoutStretch(tr *Track, from, to float64) *Track {
	return withoutSamples(tr, func(i int) bool { return tr.TimeS[i] >= from && tr.TimeS[i] <= to })
}

// withoutSamples returns a copy of tr whose samples i for which out(i)
// holds are NaN (no motor found), the other fields shared.
func withoutSamples(tr *Track, out func(i int) bool) *Track {
	c := *tr
	c.ShaftHz = slices.Clone(tr.ShaftHz)
	for i := range c.ShaftHz {
		if out(i) {
			c.ShaftHz[i] = math.NaN()
		}
	}
	return &c
}

// trackHop returns the median sample spacing.
func trackHop(tr *Track) float64 {
	n := tr.Len()
	if n < 2 {
		return math.NaN()
	}
	d := make([]float64, 0, n-1)
	for i := 1; i < n; i++ {
		d = append(d, tr.TimeS[i]-tr.TimeS[i-1])
	}
	return median(d)
}

// cleanTimes sorts, drops non-finite values and merges duplicates.
func cleanTimes(ts []float64) []float64 {
	var out []float64
	for _, t := range ts {
		if !math.IsNaN(t) && !math.IsInf(t, 0) {
			out = append(out, t)
		}
	}
	sort.Float64s(out)
	j := 0
	for i, t := range out {
		if i > 0 && t-out[j-1] < 1e-3 {
			continue
		}
		out[j] = t
		j++
	}
	return out[:j]
}

// stepDataFrom collects the valid samples of tr in [from, to].
func stepDataFrom(tr *Track, k *fopdtKernel, hop, from, to float64) *stepData {
	d := &stepData{hop: hop, k: k}
	var sig []float64
	for i, t := range tr.TimeS {
		if t < from || t > to || !tr.Valid(i) {
			continue
		}
		d.t = append(d.t, t)
		d.y = append(d.y, tr.ShaftHz[i])
		d.idx = append(d.idx, i)
		s := math.NaN()
		if i < len(tr.SigmaHz) {
			s = tr.SigmaHz[i]
		}
		sig = append(sig, s)
	}
	d.sw = sampleWeights(sig)
	return d
}

// sampleWeights turns per-sample standard errors into √weights with mean
// weight 1. Errors are clipped to [½, 3]× their median, so that a few
// samples cannot dominate and a tracker's pessimism during a fast
// transition cannot hide the transition; without usable errors all
// weights are 1.
func sampleWeights(sig []float64) []float64 {
	sw := make([]float64, len(sig))
	var ok []float64
	for _, s := range sig {
		if s > 0 && !math.IsInf(s, 0) {
			ok = append(ok, s)
		}
	}
	if len(ok) < len(sig) || len(ok) == 0 {
		for i := range sw {
			sw[i] = 1
		}
		return sw
	}
	m := median(ok)
	sum := 0.0
	for i, s := range sig {
		s = math.Min(math.Max(s, m/2), 3*m)
		sw[i] = 1 / (s * s)
		sum += sw[i]
	}
	mean := sum / float64(len(sw))
	for i := range sw {
		sw[i] = math.Sqrt(sw[i] / mean)
	}
	return sw
}
