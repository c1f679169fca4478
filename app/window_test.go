package main

import (
	"bytes"
	"context"
	"strings"
	"testing"
)

// The open command's argument handling; none of these cases opens a window.
func TestOpenArguments(t *testing.T) {
	for _, c := range []struct {
		name string
		args []string
		want int
		msg  string
	}{
		{"no file", nil, 2, "open needs at least one file"},
		{"help", []string{"-help"}, 0, "usage: whirlfit open FILE..."},
		{"missing file", []string{"no-such-recording.wav"}, 1, "no-such-recording.wav"},
		{"unknown flag", []string{"-x"}, 2, "flag provided but not defined"},
	} {
		t.Run(c.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			if got := run(context.Background(), append([]string{"open"}, c.args...), &out, &errb); got != c.want {
				t.Errorf("exit status: got %d, want %d (stderr %q)", got, c.want, errb.String())
			}
			if !strings.Contains(errb.String(), c.msg) {
				t.Errorf("stderr %q lacks %q", errb.String(), c.msg)
			}
		})
	}
}
