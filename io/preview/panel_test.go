package preview

import "testing"

// TestFrameSubtitle checks that an animation frame's subtitle is one line: a text line has
// no newline to draw, and the font would draw the control character as a missing glyph.
func TestFrameSubtitle(t *testing.T) {
	for _, c := range []struct{ sub, label, want string }{
		{"", "night-1\nMJD 61203.2", "night-1  ·  MJD 61203.2"},
		{"Vaeloris", "night-1\nMJD 61203.2", "Vaeloris  ·  night-1  ·  MJD 61203.2"},
		{"Vaeloris", "night-1", "Vaeloris  ·  night-1"},
		{"", "a\r\nb", "a  ·  b"},
	} {
		if got := frameSubtitle(c.sub, c.label); got != c.want {
			t.Errorf("frameSubtitle(%q, %q) = %q, want %q", c.sub, c.label, got, c.want)
		}
	}
}
