package deps

import (
	_ "github.com/BurntSushi/toml"
	_ "github.com/astrogo/fitsio"
	_ "golang.org/x/image/font/basicfont"
	_ "golang.org/x/net/html"
	_ "golang.org/x/term"
	_ "gonum.org/v1/gonum/mat"
	_ "gonum.org/v1/plot"
)
