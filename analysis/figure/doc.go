// Package figure draws whirlfit's figures: the spectrogram with the tracked
// ridge, the fitted step model and its 95 % band; rpm against time; and
// normalised step responses side by side. The window and the command line
// build their figures with the same functions here, so what is saved is
// what is shown.
//
// The spectrogram is coloured with Whirl, a sequential colour map designed
// for whirlfit in CIELAB (monotonic lightness, near-constant colour
// difference per step) into one *image.RGBA sized to the plot's data area
// and drawn with gonum/plot's plotter.Image; gonum/plot draws axes, labels
// and overlays.
package figure
