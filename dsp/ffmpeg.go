package dsp

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
)

// decodeFFmpeg decodes any container ffmpeg reads. ffmpeg is run with an
// argument list (never through a shell) and writes 32-bit float
// little-endian PCM at the source's own rate and channel count to a pipe.
// The rate and channel count come from ffprobe when it is present, else
// from the output stream line ffmpeg prints on stderr. path, when set, is
// given to ffmpeg so that it can seek (MP4 files may keep their index at
// the end); otherwise data is fed on stdin.
func (d decoder) decodeFFmpeg(name string, data []byte, path string) (*Audio, error) {
	input := "pipe:0"
	if path != "" {
		// The file: protocol keeps ffmpeg from reading a name such as
		// "concat:a|b" or "http://…" as another protocol.
		abs, err := filepath.Abs(path)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		input = "file:" + abs
	}
	var info ffprobeInfo
	haveProbe := false
	if d.ffprobe != "" {
		var err error
		info, err = d.probe(input, data, path == "")
		if err != nil {
			return nil, &UnsupportedError{File: name, Msg: err.Error()}
		}
		haveProbe = true
	}

	cmd := exec.Command(d.ffmpeg, "-nostdin", "-hide_banner", "-loglevel", "info",
		"-i", input, "-map", "0:a:0", "-vn", "-f", "f32le", "-acodec", "pcm_f32le", "pipe:1")
	if path == "" {
		cmd.Stdin = bytes.NewReader(data)
	}
	stderr := &capBuffer{max: 64 << 10}
	cmd.Stderr = stderr
	out, err := cmd.StdoutPipe()
	if err != nil {
		return nil, fmt.Errorf("%s: ffmpeg: %w", name, err)
	}
	if err := cmd.Start(); err != nil {
		return nil, fmt.Errorf("%s: cannot run ffmpeg: %w", name, err)
	}
	limitBytes := int64(d.limit) * 4
	pcm, rerr := io.ReadAll(io.LimitReader(out, limitBytes+1))
	if int64(len(pcm)) > limitBytes {
		_ = cmd.Process.Kill()
		_ = cmd.Wait()
		return nil, &UnsupportedError{File: name, Msg: fmt.Sprintf("too long: more than the %d samples whirlfit holds in memory; cut the recording into parts", d.limit)}
	}
	werr := cmd.Wait()
	if rerr != nil || werr != nil {
		return nil, &UnsupportedError{File: name, Msg: "ffmpeg cannot decode it: " + lastLine(stderr.String(), werr)}
	}

	rate, nch := info.rate, info.channels
	if !haveProbe || rate == 0 || nch == 0 {
		rate, nch = parseFFmpegOutput(stderr.String())
	}
	if rate <= 0 || nch <= 0 {
		return nil, &UnsupportedError{File: name, Msg: "ffmpeg decoded it but did not report its sample rate and channel count"}
	}
	if info.container == "" {
		info.container, info.codec = parseFFmpegInput(stderr.String())
	}
	frameBytes := 4 * nch
	frames := len(pcm) / frameBytes
	var warnings []string
	if rest := len(pcm) % frameBytes; rest != 0 {
		warnings = append(warnings, fmt.Sprintf("ffmpeg output ends in a partial frame: %d bytes dropped", rest))
	}
	a := &Audio{
		Container:  info.container,
		Codec:      info.codec,
		SampleRate: rate,
		Bits:       info.bits,
		Channels:   makeChannels(nch, frames),
		Warnings:   warnings,
	}
	i := 0
	for n := 0; n < frames; n++ {
		for c := 0; c < nch; c++ {
			v := math.Float32frombits(binary.LittleEndian.Uint32(pcm[i:]))
			if v-v != 0 {
				v = 0
				a.NonFinite++
			}
			a.Channels[c][n] = v
			i += 4
		}
	}
	return a, nil
}

// ffprobeInfo is the first audio stream as ffprobe describes it.
type ffprobeInfo struct {
	container, codec string
	rate, channels   int
	bits             int
}

func (d decoder) probe(input string, data []byte, stdin bool) (ffprobeInfo, error) {
	cmd := exec.Command(d.ffprobe, "-v", "error", "-select_streams", "a:0",
		"-show_entries", "stream=codec_name,sample_rate,channels,bits_per_raw_sample,bits_per_sample:format=format_name",
		"-of", "json", input)
	if stdin {
		cmd.Stdin = bytes.NewReader(data)
	}
	stderr := &capBuffer{max: 16 << 10}
	cmd.Stderr = stderr
	out, err := cmd.Output()
	if err != nil {
		return ffprobeInfo{}, fmt.Errorf("not audio that whirlfit or ffmpeg can read (ffprobe: %s)", lastLine(stderr.String(), err))
	}
	var r struct {
		Streams []struct {
			CodecName  string `json:"codec_name"`
			SampleRate string `json:"sample_rate"`
			Channels   int    `json:"channels"`
			Bits       string `json:"bits_per_raw_sample"`
			SampleBits int    `json:"bits_per_sample"`
		} `json:"streams"`
		Format struct {
			FormatName string `json:"format_name"`
		} `json:"format"`
	}
	if err := json.Unmarshal(out, &r); err != nil {
		return ffprobeInfo{}, fmt.Errorf("ffprobe output not understood: %v", err)
	}
	if len(r.Streams) == 0 {
		return ffprobeInfo{}, fmt.Errorf("no audio stream (ffprobe found the container %q)", r.Format.FormatName)
	}
	s := r.Streams[0]
	info := ffprobeInfo{
		container: containerName(r.Format.FormatName),
		codec:     strings.ToUpper(s.CodecName),
		channels:  s.Channels,
	}
	info.rate, _ = strconv.Atoi(s.SampleRate)
	info.bits, _ = strconv.Atoi(s.Bits)
	if info.bits == 0 {
		info.bits = s.SampleBits // PCM codings report only this
	}
	return info, nil
}

// containerName shortens ffmpeg's demuxer names ("mov,mp4,m4a,3gp,3g2,mj2").
func containerName(s string) string {
	switch {
	case s == "":
		return "unknown"
	case strings.HasPrefix(s, "mov,mp4"):
		return "MP4"
	case strings.HasPrefix(s, "matroska"):
		return "Matroska"
	}
	if i := strings.IndexByte(s, ','); i > 0 {
		s = s[:i]
	}
	return strings.ToUpper(s)
}

var (
	ffOutStream = regexp.MustCompile(`(?m)^Output #0.*(?:\n.*)*?\n\s*Stream #0:\d+.*?: Audio: pcm_f32le[^,]*, (\d+) Hz, ([^,]+),`)
	ffInput     = regexp.MustCompile(`(?m)^Input #0, ([^,]+(?:,[^,\s]+)*), from`)
	ffInStream  = regexp.MustCompile(`(?m)^\s*Stream #0:\d+.*?: Audio: (\w+)`)
	ffLayouts   = map[string]int{
		"mono": 1, "stereo": 2, "2.1": 3, "3.0": 3, "3.0(back)": 3, "4.0": 4, "quad": 4,
		"quad(side)": 4, "3.1": 4, "5.0": 5, "5.0(side)": 5, "4.1": 5, "5.1": 6,
		"5.1(side)": 6, "6.0": 6, "6.1": 7, "7.0": 7, "7.1": 8, "7.1(wide)": 8, "octagonal": 8,
	}
	ffNChannels = regexp.MustCompile(`^(\d+) channels`)
)

// parseFFmpegOutput reads the output stream's rate and channel count from
// ffmpeg's stderr, e.g. "Stream #0:0: Audio: pcm_f32le, 48000 Hz, mono, flt".
func parseFFmpegOutput(log string) (rate, channels int) {
	m := ffOutStream.FindStringSubmatch(log)
	if m == nil {
		return 0, 0
	}
	rate, _ = strconv.Atoi(m[1])
	layout := strings.TrimSpace(m[2])
	if n, ok := ffLayouts[layout]; ok {
		return rate, n
	}
	if mm := ffNChannels.FindStringSubmatch(layout); mm != nil {
		channels, _ = strconv.Atoi(mm[1])
	}
	return rate, channels
}

// parseFFmpegInput reads the container and codec names from ffmpeg's
// stderr, e.g. "Input #0, ogg, from …" and "Stream #0:0: Audio: vorbis".
func parseFFmpegInput(log string) (container, codec string) {
	container = "unknown"
	if m := ffInput.FindStringSubmatch(log); m != nil {
		container = containerName(m[1])
	}
	if m := ffInStream.FindStringSubmatch(log); m != nil {
		codec = strings.ToUpper(m[1])
	}
	return container, codec
}

// lastLine returns the last non-empty line of a tool's stderr, or err.
func lastLine(s string, err error) string {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	for i := len(lines) - 1; i >= 0; i-- {
		if l := strings.TrimSpace(lines[i]); l != "" {
			return l
		}
	}
	if err != nil {
		return err.Error()
	}
	return "no message"
}

// capBuffer keeps the first max bytes written to it (where ffmpeg
// describes the streams) and the last 4 KiB (where it puts its error).
type capBuffer struct {
	head, tail []byte
	max        int
	dropped    bool
}

func (b *capBuffer) Write(p []byte) (int, error) {
	total := len(p)
	if room := b.max - len(b.head); room > 0 {
		n := min(len(p), room)
		b.head = append(b.head, p[:n]...)
		p = p[n:]
	}
	if len(p) > 0 {
		const keep = 4 << 10
		b.tail = append(b.tail, p...)
		if len(b.tail) > keep {
			b.tail = append(b.tail[:0], b.tail[len(b.tail)-keep:]...)
			b.dropped = true
		}
	}
	return total, nil
}

func (b *capBuffer) String() string {
	sep := ""
	if b.dropped {
		sep = "\n…\n"
	}
	return string(b.head) + sep + string(b.tail)
}
