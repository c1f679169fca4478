package ui

import (
	"slices"
	"testing"

	"fyne.io/fyne/v2/test"
)

func TestSettingsConfigAndPreferences(t *testing.T) {
	a := test.NewTempApp(t)
	s := Settings{Blades: 3, Channel: 2, FrameLen: 4096, Hop: 256, MinHz: 50, MaxHz: 600, MaxAccel: 20000, MinChangePct: 8, NoBootstrap: true}
	cfg := s.Config([]float64{1, 2.5})
	switch {
	case cfg.Blades != 3 || cfg.Track.Blades != 3 || cfg.Channel != 2:
		t.Errorf("blades/channel: got %d/%d/%d, want 3/3/2", cfg.Blades, cfg.Track.Blades, cfg.Channel)
	case cfg.Track.STFT.FrameLen != 4096 || cfg.Track.STFT.Hop != 256:
		t.Errorf("STFT: got %d/%d, want 4096/256", cfg.Track.STFT.FrameLen, cfg.Track.STFT.Hop)
	case cfg.Track.MinShaftHz != 50 || cfg.Track.MaxShaftHz != 600 || cfg.Track.MaxAccelHzPerS != 20000:
		t.Errorf("tracker range: got %+v", cfg.Track)
	case cfg.Steps.MinChangeFraction != 0.08 || cfg.Steps.Bootstrap != -1:
		t.Errorf("steps: got %+v, want 8 %% and no bootstrap", cfg.Steps)
	case !slices.Equal(cfg.CommandTimesS, []float64{1, 2.5}):
		t.Errorf("command times: got %v", cfg.CommandTimesS)
	}
	if z := (Settings{}).Config(nil); z.Steps.Bootstrap != 0 || z.Track.STFT.FrameLen != 0 {
		t.Errorf("zero settings must leave the core's defaults: got %+v", z)
	}
	s.save(a.Preferences())
	if got := loadSettings(a.Preferences()); got != s {
		t.Errorf("preferences round trip: got %+v, want %+v", got, s)
	}
	p := newSettingsPanel(s, nil)
	p.set(s, 2)
	if got := p.get(); got != s {
		t.Errorf("form round trip: got %+v, want %+v", got, s)
	}
	for i := 0; i < maxRecent+3; i++ {
		addRecent(a.Preferences(), string(rune('a'+i)))
	}
	addRecent(a.Preferences(), "c")
	r := a.Preferences().StringList(prefRecent)
	if len(r) != maxRecent || r[0] != "c" || slices.Index(r[1:], "c") >= 0 {
		t.Errorf("recent files: got %v, want %d entries with c first once", r, maxRecent)
	}
}
