package ui

import (
	"os"
	"path/filepath"
	"slices"
	"strings"

	"fyne.io/fyne/v2"
)

// audioExts are the file name endings taken from a dropped folder (files
// dropped one by one are tried whatever their name).
var audioExts = []string{".wav", ".wave", ".flac", ".mp3", ".ogg", ".opus", ".m4a", ".aac", ".aif", ".aiff"}

// droppedPaths turns dropped URIs into recording paths: files as they
// are, folders as the audio files directly inside them, in name order.
// Non-file URIs are skipped.
func droppedPaths(uris []fyne.URI) []string {
	var out []string
	for _, u := range uris {
		if u == nil || u.Scheme() != "file" {
			continue
		}
		p := u.Path()
		fi, err := os.Stat(p)
		if err != nil {
			continue
		}
		if !fi.IsDir() {
			out = append(out, p)
			continue
		}
		entries, err := os.ReadDir(p)
		if err != nil {
			continue
		}
		var inDir []string
		for _, e := range entries {
			if e.Type().IsRegular() && slices.Contains(audioExts, strings.ToLower(filepath.Ext(e.Name()))) {
				inDir = append(inDir, filepath.Join(p, e.Name()))
			}
		}
		slices.Sort(inDir)
		out = append(out, inDir...)
	}
	return out
}

// HandleDrop opens dropped files and folders: the first recording in the
// analysis view and, when there are several, all of them in the
// comparison. Window.SetOnDropped calls it.
func (w *Window) HandleDrop(uris []fyne.URI) {
	paths := droppedPaths(uris)
	if len(paths) == 0 {
		w.status.SetText("Nothing to open in what was dropped (files or folders of recordings are taken).")
		return
	}
	w.Open(paths)
}
