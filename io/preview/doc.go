// Package preview draws images of the sky as PNG previews, side-by-side
// panels, montages of epochs and animated GIFs, ready to be looked at.
//
// # Orientation
//
// Images are row-major slices img[iy*nx+ix] as everywhere in vcz
// (CONVENTIONS.md): ix runs along FITS axis 1, iy along FITS axis 2, and
// pixel (ix, iy) sits at x = −(ix − nx/2)·pixel (east), y = (iy − ny/2)·pixel
// (north). Previews are drawn as a FITS viewer shows such an image: north up
// and east to the left, so iy = 0 is the bottom row of the picture and
// ix = 0 its left column. A compass (N up, E left) says so on every preview.
//
// # Decorations
//
// With Options.Pixel (mas per pixel) set, a scale bar of a round length in
// mas and the resolution element (Options.Beam, usually λmin/(2·Bmax)) are
// drawn in the lower corners. A colour bar with tick labels sits on the
// right; labels of very small or large scales are given in units of a power
// of ten named on the bar. Text uses the Go fonts shipped with
// golang.org/x/image (Go Regular and Go Bold); characters they lack, such as
// a subscript r, are replaced by their plain form.
//
// # Colour
//
// The default colour map of an extended object is cubehelix (Green 2011,
// Bull. Astr. Soc. India 39, 289) with the paper's default parameters: start
// 0.5, rotations −1.5, hue 1, gamma 1. Its perceived intensity 0.30 R + 0.59 G
// + 0.11 B increases monotonically from black to white, so previews read
// correctly in grey. A point-like image (one whose automatic stretch is not
// linear) gets Lightness instead, one amber hue whose CIE 1976 lightness L*
// rises in proportion to the value, so the faint wings of a point are not
// painted in other hues (ChooseColormap); Options.Colormap sets either.
// Values are mapped linearly between Options.Min and Options.Max (by
// default the data range) and then through a Stretch (linear, square root,
// asinh or log). Panels, montages and animations use one scale for all
// their images, so equal colours mean equal values.
//
// # Files
//
// Encode, EncodePanel, EncodeMontage and EncodeGIF write to an io.Writer;
// the Write* functions write files through vcz/io/safefile, so a file is
// either complete or absent. Every function is safe for concurrent use.
package preview
