package dsp

import "fmt"

// A FormatError reports that the input is not a well-formed audio file of
// the kind its first bytes announce: a truncated header, a chunk that runs
// past the end of the file, an impossible field value.
type FormatError struct {
	// File names the input (a path, or the name given to Decode).
	File string
	// Offset is the byte offset of the fault from the start of the file;
	// it is printed when Chunk is set or Offset is positive.
	Offset int64
	// Chunk is the RIFF chunk ID or stream part where the fault lies, if
	// known.
	Chunk string
	// Msg describes the fault.
	Msg string
}

func (e *FormatError) Error() string {
	where := ""
	switch {
	case e.Chunk != "":
		where = fmt.Sprintf(" (%q chunk at byte %d)", e.Chunk, e.Offset)
	case e.Offset > 0:
		where = fmt.Sprintf(" (at byte %d)", e.Offset)
	}
	return prefix(e.File) + e.Msg + where
}

// An UnsupportedError reports that the input is well formed but uses a
// feature whirlfit does not read (a codec, a sample rate, a bit depth).
type UnsupportedError struct {
	File string
	Msg  string

	// convertible marks codecs that ffmpeg, when present, can read
	// instead.
	convertible bool
}

func (e *UnsupportedError) Error() string {
	return prefix(e.File) + e.Msg
}

func prefix(file string) string {
	if file == "" {
		return ""
	}
	return file + ": "
}
