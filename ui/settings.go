package ui

import (
	"fmt"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"whirlfit/analysis"
)

// Settings are the analysis choices the window offers. Zero values mean
// "let the core choose", as in analysis.Config.
type Settings struct {
	Blades   int     // propeller blade count; 0 = estimate
	Channel  int     // 1-based channel; 0 = mix of all channels
	FrameLen int     // STFT window length, samples; 0 = default
	Hop      int     // STFT hop, samples; 0 = default
	MinHz    float64 // lowest shaft frequency searched, Hz; 0 = default
	MaxHz    float64 // highest shaft frequency searched, Hz; 0 = default
	MaxAccel float64 // largest shaft-frequency change the tracker accepts, Hz/s; 0 = default
	// MinChangePct is the smallest speed change detection calls a step, in
	// percent of the speed before it; 0 = default.
	MinChangePct float64
	// NoBootstrap skips the bootstrap cross-check of the intervals (faster
	// refits; the analytic intervals remain).
	NoBootstrap bool
}

// Config turns the settings and the user's command-time markers into the
// core's configuration.
func (s Settings) Config(commandTimesS []float64) analysis.Config {
	cfg := analysis.Config{Blades: s.Blades, Channel: s.Channel, CommandTimesS: commandTimesS}
	cfg.Track.Blades = s.Blades
	cfg.Track.STFT.FrameLen = s.FrameLen
	cfg.Track.STFT.Hop = s.Hop
	cfg.Track.MinShaftHz = s.MinHz
	cfg.Track.MaxShaftHz = s.MaxHz
	cfg.Track.MaxAccelHzPerS = s.MaxAccel
	cfg.Steps.MinChangeFraction = s.MinChangePct / percent
	if s.NoBootstrap {
		cfg.Steps.Bootstrap = -1
	}
	return cfg
}

// percent converts a fraction to percent.
const percent = 100

// Preference keys. They name what is stored, in whirlfit's own words.
const (
	prefBlades     = "analysis.blades"
	prefChannel    = "analysis.channel"
	prefFrameLen   = "analysis.frame_len"
	prefHop        = "analysis.hop"
	prefMinHz      = "analysis.min_shaft_hz"
	prefMaxHz      = "analysis.max_shaft_hz"
	prefMaxAccel   = "analysis.max_accel_hz_per_s"
	prefMinChange  = "analysis.min_change_pct"
	prefNoBoot     = "analysis.no_bootstrap"
	prefLastFolder = "files.last_folder"
	prefRecent     = "files.recent"
	prefTheme      = "view.theme"
	prefWinW       = "window.width"
	prefWinH       = "window.height"
	prefNoteSeen   = "first_run.note_seen"
)

// prefIntervals keeps each recording's analysis interval, one
// "from<TAB>to<TAB>path" entry per recording, latest first (path "" is the
// demo). The interval belongs to a recording, unlike the settings above.
const prefIntervals = "analysis.intervals"

// maxRecent is how many recent files the File menu lists.
const maxRecent = 8

// maxIntervals is how many recordings' intervals the preferences keep.
const maxIntervals = 64

// loadSettings reads the settings from the preferences; missing keys give
// the zero value, i.e. the core's defaults.
func loadSettings(p fyne.Preferences) Settings {
	return Settings{
		Blades:   p.Int(prefBlades),
		Channel:  p.Int(prefChannel),
		FrameLen: p.Int(prefFrameLen),
		Hop:      p.Int(prefHop),
		MinHz:    p.Float(prefMinHz),
		MaxHz:    p.Float(prefMaxHz),
		MaxAccel: p.Float(prefMaxAccel),

		MinChangePct: p.Float(prefMinChange),
		NoBootstrap:  p.Bool(prefNoBoot),
	}
}

// save stores the settings in the preferences.
func (s Settings) save(p fyne.Preferences) {
	p.SetInt(prefBlades, s.Blades)
	p.SetInt(prefChannel, s.Channel)
	p.SetInt(prefFrameLen, s.FrameLen)
	p.SetInt(prefHop, s.Hop)
	p.SetFloat(prefMinHz, s.MinHz)
	p.SetFloat(prefMaxHz, s.MaxHz)
	p.SetFloat(prefMaxAccel, s.MaxAccel)
	p.SetFloat(prefMinChange, s.MinChangePct)
	p.SetBool(prefNoBoot, s.NoBootstrap)
}

// addRecent puts path at the top of the recent-files list.
func addRecent(p fyne.Preferences, path string) []string {
	old := p.StringList(prefRecent)
	list := []string{path}
	for _, o := range old {
		if o != path && len(list) < maxRecent {
			list = append(list, o)
		}
	}
	p.SetStringList(prefRecent, list)
	return list
}

// loadInterval returns the analysis interval kept for the recording at
// path, or the zero span (the whole recording).
func loadInterval(p fyne.Preferences, path string) span {
	for _, e := range p.StringList(prefIntervals) {
		f := strings.SplitN(e, "\t", 3)
		if len(f) != 3 || f[2] != path {
			continue
		}
		from, err1 := strconv.ParseFloat(f[0], 64)
		to, err2 := strconv.ParseFloat(f[1], 64)
		if err1 != nil || err2 != nil {
			return span{}
		}
		return span{FromS: from, ToS: to}
	}
	return span{}
}

// saveInterval keeps iv as the interval of the recording at path; the
// zero span forgets it.
func saveInterval(p fyne.Preferences, path string, iv span) {
	var list []string
	if !iv.whole() {
		list = append(list, strconv.FormatFloat(iv.FromS, 'g', -1, 64)+"\t"+strconv.FormatFloat(iv.ToS, 'g', -1, 64)+"\t"+path)
	}
	for _, e := range p.StringList(prefIntervals) {
		if f := strings.SplitN(e, "\t", 3); len(f) == 3 && f[2] != path && len(list) < maxIntervals {
			list = append(list, e)
		}
	}
	p.SetStringList(prefIntervals, list)
}

const autoChoice = "auto"

// settingsPanel is the form that edits Settings. onChange is called on the
// UI goroutine with the new settings whenever the user changes one.
type settingsPanel struct {
	box                    *fyne.Container
	blades, channel        *widget.Select
	frameLen, hop          *widget.Select
	minHz, maxHz, maxAccel *widget.Entry
	minChange              *widget.Entry
	bootstrap              *widget.Check
	onChange               func(Settings)
	quiet                  bool
}

func intChoices(vals ...int) []string {
	out := []string{autoChoice}
	for _, v := range vals {
		out = append(out, strconv.Itoa(v))
	}
	return out
}

func parseChoice(s string) int {
	v, err := strconv.Atoi(s)
	if err != nil {
		return 0
	}
	return v
}

func choiceOf(v int) string {
	if v <= 0 {
		return autoChoice
	}
	return strconv.Itoa(v)
}

func floatText(v float64) string {
	if v <= 0 {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func newSettingsPanel(s Settings, onChange func(Settings)) *settingsPanel {
	p := &settingsPanel{onChange: onChange}
	changed := func(string) { p.changed() }
	p.blades = widget.NewSelect(intChoices(2, 3, 4, 5, 6), changed)
	p.channel = widget.NewSelect([]string{"mix"}, changed)
	p.frameLen = widget.NewSelect(intChoices(1024, 2048, 4096, 8192, 16384), changed)
	p.hop = widget.NewSelect(intChoices(64, 128, 256, 512, 1024, 2048), changed)
	entry := func(hint string) *widget.Entry {
		e := widget.NewEntry()
		e.SetPlaceHolder(hint)
		e.Validator = func(s string) error {
			if s == "" {
				return nil
			}
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || v < 0 {
				return fmt.Errorf("a positive number, or empty for the default")
			}
			return nil
		}
		e.OnSubmitted = changed
		e.OnChanged = func(string) {}
		return e
	}
	p.minHz, p.maxHz, p.maxAccel = entry("default"), entry("default"), entry("default")
	p.minChange = entry("default")
	p.bootstrap = widget.NewCheck("cross-check", func(bool) { p.changed() })
	apply := widget.NewButton("Apply", p.changed)
	form := widget.NewForm(
		widget.NewFormItem("Blades", p.blades),
		widget.NewFormItem("Channel", p.channel),
		widget.NewFormItem("Window (samples)", p.frameLen),
		widget.NewFormItem("Hop (samples)", p.hop),
		widget.NewFormItem("Lowest shaft Hz", p.minHz),
		widget.NewFormItem("Highest shaft Hz", p.maxHz),
		widget.NewFormItem("Max change Hz/s", p.maxAccel),
		widget.NewFormItem("Smallest step %", p.minChange),
		widget.NewFormItem("Bootstrap", p.bootstrap),
	)
	p.box = container.NewVBox(form, apply)
	p.set(s, 0)
	return p
}

// set shows s without reporting a change; channels is the number of
// channels of the current recording (0 when none is loaded).
func (p *settingsPanel) set(s Settings, channels int) {
	p.quiet = true
	defer func() { p.quiet = false }()
	p.blades.SetSelected(choiceOf(s.Blades))
	opts := []string{"mix"}
	for c := 1; c <= channels; c++ {
		opts = append(opts, strconv.Itoa(c))
	}
	p.channel.SetOptions(opts)
	if s.Channel > 0 && s.Channel <= channels {
		p.channel.SetSelected(strconv.Itoa(s.Channel))
	} else {
		p.channel.SetSelected("mix")
	}
	p.frameLen.SetSelected(choiceOf(s.FrameLen))
	p.hop.SetSelected(choiceOf(s.Hop))
	p.minHz.SetText(floatText(s.MinHz))
	p.maxHz.SetText(floatText(s.MaxHz))
	p.maxAccel.SetText(floatText(s.MaxAccel))
	p.minChange.SetText(floatText(s.MinChangePct))
	p.bootstrap.SetChecked(!s.NoBootstrap)
}

// get reads the settings the form shows.
func (p *settingsPanel) get() Settings {
	f := func(e *widget.Entry) float64 {
		v, err := strconv.ParseFloat(e.Text, 64)
		if err != nil || v < 0 {
			return 0
		}
		return v
	}
	return Settings{
		Blades:   parseChoice(p.blades.Selected),
		Channel:  parseChoice(p.channel.Selected),
		FrameLen: parseChoice(p.frameLen.Selected),
		Hop:      parseChoice(p.hop.Selected),
		MinHz:    f(p.minHz),
		MaxHz:    f(p.maxHz),
		MaxAccel: f(p.maxAccel),

		MinChangePct: f(p.minChange),
		NoBootstrap:  !p.bootstrap.Checked,
	}
}

func (p *settingsPanel) changed() {
	if p.quiet || p.onChange == nil {
		return
	}
	p.onChange(p.get())
}
