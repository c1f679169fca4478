package ui

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"
)

// firstRunNote is shown on the first start (and from Help): what the
// window does, and how to record a motor test safely.
const firstRunNote = `This is a built-in demo recording: a synthetic bench test with four throttle steps. Open your own recording with File → Open or drop files or a folder onto the window.

The plot shows the spectrogram with the tracked rotor lines; the table below lists each step's dead time, time constant and speeds with 95 % intervals. Place command-time markers on the time axis to measure dead time.

Before you record a motor test:
• Clamp the motor firmly to a heavy bench or a test stand; never hold it by hand.
• Stand out of the plane of the propeller, and keep others out of it.
• Wear eye protection; a propeller or a loose part can break off.
• Power it from a current-limited supply, or fit a fuse; start with a low limit.
• Look after the battery: charge and store it as its maker says, never leave it charging unattended, and keep a fire-safe container near.
• Follow your local rules and the instructions of the motor, controller and propeller makers; they come first.`

// showFirstRunNote shows the note; markSeen stores that it was shown.
func (w *Window) showFirstRunNote(markSeen bool) {
	text := widget.NewLabel(firstRunNote)
	text.Wrapping = fyne.TextWrapWord
	d := dialog.NewCustom("Welcome to whirlfit — and safety first", "Got it", text, w.win)
	d.Resize(fyne.NewSize(620, 520))
	d.Show()
	if markSeen {
		w.prefs.SetBool(prefNoteSeen, true)
	}
}

// FirstStart opens the demo and, on the first run only, the note.
func (w *Window) FirstStart() {
	w.OpenDemo()
	if !w.prefs.Bool(prefNoteSeen) {
		w.showFirstRunNote(true)
	}
}
