package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"

	"fyne.io/fyne/v2"
	fyneapp "fyne.io/fyne/v2/app"

	"whirlfit/assets"
	"whirlfit/ui"
)

// appID names whirlfit's preferences store.
const appID = "invalid.whirlfit.app"

func init() {
	register(command{
		name:    "open",
		summary: "open recordings in the window",
		run:     runOpen,
	})
}

// runOpen is 'whirlfit open FILE...': the window on the given files (the
// first in the analysis view, all of them in the comparison).
func runOpen(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("open", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = usageFunc(fs, stderr, "whirlfit open FILE...", `
Opens the window on the recordings: the first one is analysed and shown,
and when there are several all of them go into the Compare tab.`)
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return 0
		}
		return 2
	}
	files := fs.Args()
	if len(files) == 0 {
		fmt.Fprintln(stderr, "whirlfit: open needs at least one file")
		return 2
	}
	for _, f := range files {
		if _, err := os.Stat(f); err != nil {
			fmt.Fprintf(stderr, "whirlfit: %v\n", err)
			return 1
		}
	}
	return runWindow(ctx, files, stderr)
}

// runWindow opens the window on files or, when there are none, on the
// embedded demo, and returns when the window is closed.
func runWindow(ctx context.Context, files []string, stderr io.Writer) int {
	a := fyneapp.NewWithID(appID)
	a.SetIcon(fyne.NewStaticResource("whirlfit.png", assets.Icon))
	win := a.NewWindow("whirlfit")
	w := ui.New(a, win)
	win.Resize(ui.SavedSize(a.Preferences()))
	win.SetCloseIntercept(func() {
		w.Close()
		win.Close()
	})
	if len(files) == 0 {
		w.FirstStart()
	} else {
		abs := make([]string, len(files))
		for i, f := range files {
			if p, err := filepath.Abs(f); err == nil {
				abs[i] = p
			} else {
				abs[i] = f
			}
		}
		w.Open(abs)
	}
	// Ctrl-C in the terminal closes the window like its close button.
	go func() {
		<-ctx.Done()
		fyne.Do(func() { w.Close(); a.Quit() })
	}()
	if shots := os.Getenv(ui.ScreenshotEnv); shots != "" {
		win.Resize(fyne.NewSize(1280, 800))
		go ui.Screenshots(w, shots, grabScreen, a.Quit, stderr)
	}
	win.ShowAndRun()
	return 0
}

// grabScreen writes the X display's screen to a PNG with ffmpeg's x11grab
// (the GL canvas capture reads back blank under Xvfb's software renderer).
func grabScreen(path string) error {
	disp := os.Getenv("DISPLAY")
	if disp == "" {
		return fmt.Errorf("no DISPLAY to capture")
	}
	out, err := exec.Command("ffmpeg", "-loglevel", "error", "-y", "-f", "x11grab",
		"-video_size", "1280x800", "-i", disp, "-frames:v", "1", path).CombinedOutput()
	if err != nil {
		return fmt.Errorf("ffmpeg x11grab: %v: %s", err, out)
	}
	return nil
}
