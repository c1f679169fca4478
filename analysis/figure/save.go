package figure

import (
	"fmt"
	"image"
	"image/draw"
	"io"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	pdraw "gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"whirlfit/analysis/export"
)

// Formats lists the file extensions Save understands.
var Formats = []string{".png", ".svg", ".pdf", ".jpg", ".jpeg", ".tif", ".tiff", ".eps"}

// DefaultWidthIn and DefaultHeightIn are the size of a saved figure in
// inches (PNG at gonum/plot's default of 96 dpi: 1056 × 576 pixels).
const (
	DefaultWidthIn  = 11
	DefaultHeightIn = 6
)

func format(path string) (string, error) {
	ext := strings.ToLower(filepath.Ext(path))
	for _, f := range Formats {
		if ext == f {
			return ext[1:], nil
		}
	}
	return "", fmt.Errorf("figure: %s: unknown figure format %q (use one of %s)", path, ext, strings.Join(Formats, ", "))
}

// Save writes p to path, in the format its extension names (PNG, SVG, PDF,
// …), widthIn × heightIn inches. The write is atomic; an existing file is
// replaced only when force is set (export.ErrExists otherwise).
func Save(p *plot.Plot, path string, widthIn, heightIn float64, force bool) error {
	f, err := format(path)
	if err != nil {
		return err
	}
	wt, err := p.WriterTo(vg.Length(widthIn)*vg.Inch, vg.Length(heightIn)*vg.Inch, f)
	if err != nil {
		return err
	}
	return export.WriteFileAtomic(path, force, func(w io.Writer) error {
		_, err := wt.WriteTo(w)
		return err
	})
}

// SaveGrid writes several plots as a grid of cols columns (rows as
// needed) in one file, like Save.
func SaveGrid(ps []*plot.Plot, cols int, path string, widthIn, heightIn float64, force bool) error {
	if len(ps) == 0 {
		return fmt.Errorf("figure: %s: nothing to draw", path)
	}
	f, err := format(path)
	if err != nil {
		return err
	}
	cols = max(1, min(cols, len(ps)))
	rows := (len(ps) + cols - 1) / cols
	c, err := pdraw.NewFormattedCanvas(vg.Length(widthIn)*vg.Inch, vg.Length(heightIn)*vg.Inch, f)
	if err != nil {
		return err
	}
	dc := pdraw.New(c)
	tiles := pdraw.Tiles{Rows: rows, Cols: cols, PadX: vg.Millimeter, PadY: vg.Millimeter,
		PadTop: 2 * vg.Millimeter, PadBottom: 2 * vg.Millimeter, PadLeft: 2 * vg.Millimeter, PadRight: 2 * vg.Millimeter}
	grid := make([][]*plot.Plot, rows)
	for r := range grid {
		grid[r] = make([]*plot.Plot, cols)
		for k := range grid[r] {
			if i := r*cols + k; i < len(ps) {
				grid[r][k] = ps[i]
			}
		}
	}
	canvases := plot.Align(grid, tiles, dc)
	for r := range grid {
		for k := range grid[r] {
			if grid[r][k] != nil {
				grid[r][k].Draw(canvases[r][k])
			}
		}
	}
	return export.WriteFileAtomic(path, force, func(w io.Writer) error {
		_, err := c.WriteTo(w)
		return err
	})
}

// ScreenDPI is the resolution RenderImage draws at: text and lines keep
// their sizes in points, as on a 96 dpi screen.
const ScreenDPI = 96

// RenderImage draws p into a new wPx × hPx image, for the window.
func RenderImage(p *plot.Plot, wPx, hPx int) *image.RGBA {
	wPx, hPx = max(wPx, 1), max(hPx, 1)
	c := vgimg.NewWith(
		vgimg.UseWH(vg.Length(wPx)*vg.Inch/ScreenDPI, vg.Length(hPx)*vg.Inch/ScreenDPI),
		vgimg.UseDPI(ScreenDPI))
	p.Draw(pdraw.New(c))
	img := c.Image()
	if rgba, ok := img.(*image.RGBA); ok && rgba.Bounds().Dx() == wPx && rgba.Bounds().Dy() == hPx {
		return rgba
	}
	out := image.NewRGBA(image.Rect(0, 0, wPx, hPx))
	draw.Draw(out, out.Bounds(), img, img.Bounds().Min, draw.Src)
	return out
}
