package synth

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

func TestWriteFileFormats(t *testing.T) {
	// Each format is written and read back by ffprobe (an outside tool),
	// which must report the codec and a duration within 0.1 s of 2 s
	// (lossy codecs pad a few milliseconds).
	if _, err := exec.LookPath("ffprobe"); err != nil {
		t.Skip("ffprobe not on PATH")
	}
	sc := baseScene()
	sc.DurationS = 2
	x, err := Render(sc)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	codec := map[Format]string{WAV16: "pcm_s16le", WAV24: "pcm_s24le", WAVFloat: "pcm_f32le",
		FLAC: "flac", MP3: "mp3", M4A: "aac", OGG: "vorbis", Opus: "opus"}
	formats := []Format{WAV16, WAV24, WAVFloat, FLAC, MP3, M4A, OGG}
	if !testing.Short() {
		formats = append(formats, Opus)
	}
	for _, f := range formats {
		p := filepath.Join(dir, "x"+f.Ext())
		if err := WriteFile(context.Background(), p, [][]float32{x}, sc.SampleRate, f); err != nil {
			if err == ErrNoEncoder {
				t.Skip(err)
			}
			t.Fatalf("%s: %v", f, err)
		}
		out, err := exec.Command("ffprobe", "-v", "error", "-show_entries", "stream=codec_name:format=duration", "-of", "default=nw=1", p).Output()
		if err != nil {
			t.Fatalf("%s: ffprobe: %v", f, err)
		}
		s := string(out)
		if !strings.Contains(s, "codec_name="+codec[f]) {
			t.Errorf("%s: ffprobe says %q, want codec %s", f, s, codec[f])
		}
		i := strings.Index(s, "duration=")
		d, _ := strconv.ParseFloat(strings.TrimSpace(strings.SplitN(s[i+9:], "\n", 2)[0]), 64)
		st, _ := os.Stat(p)
		t.Logf("%-6s %6d bytes, duration %.3f s", f, st.Size(), d)
		if d < 1.95 || d > 2.1 {
			t.Errorf("%s: duration %.3f s, want 2", f, d)
		}
	}
}
