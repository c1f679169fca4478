package main

// TEMPORARY until the window exists: the window's author replaces this file.

import (
	"context"
	"fmt"
	"io"
)

func runWindow(ctx context.Context, files []string, stderr io.Writer) int {
	fmt.Fprintln(stderr, "whirlfit: the window is not built yet")
	return 1
}
