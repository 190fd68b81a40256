package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// theme holds the non-data colours of a chart.
type theme struct {
	ink, muted, grid, bg color.NRGBA
}

func hex(s string) color.NRGBA {
	var r, g, b uint8
	if _, err := fmt.Sscanf(s, "#%02x%02x%02x", &r, &g, &b); err != nil {
		panic("report: bad colour " + s)
	}
	return color.NRGBA{r, g, b, 255}
}

var (
	lightTheme = theme{ink: hex("#1b1b1b"), muted: hex("#5c5c5c"), grid: hex("#dcdcdc"), bg: hex("#ffffff")}
	darkTheme  = theme{ink: hex("#e8e8e8"), muted: hex("#a6a6a6"), grid: hex("#3c3c3c"), bg: hex("#1c1c1e")}
	// markTheme draws with placeholder colours that themedSVG turns into
	// CSS variables, so one SVG follows the viewer's light or dark scheme.
	markTheme = theme{ink: hex("#010101"), muted: hex("#020202"), grid: hex("#030303"), bg: hex("#040404")}
)

// okabeIto is the colour-blind-safe palette of Okabe & Ito, "Color Universal
// Design" (2008), without its black, ordered so that the first colours
// differ most and the low-contrast yellow comes last.
var okabeIto = []color.NRGBA{
	hex("#0072B2"), // blue
	hex("#D55E00"), // vermillion
	hex("#009E73"), // bluish green
	hex("#E69F00"), // orange
	hex("#CC79A7"), // reddish purple
	hex("#56B4E9"), // sky blue
	hex("#F0E442"), // yellow
}

var dashes = [][]vg.Length{
	nil,
	{vg.Points(5), vg.Points(2.5)},
	{vg.Points(1.5), vg.Points(1.8)},
	{vg.Points(6), vg.Points(2), vg.Points(1.5), vg.Points(2)},
	{vg.Points(3), vg.Points(3)},
	{vg.Points(8), vg.Points(2), vg.Points(1.5), vg.Points(2), vg.Points(1.5), vg.Points(2)},
	{vg.Points(1), vg.Points(4)},
}

var glyphs = []draw.GlyphDrawer{
	draw.CircleGlyph{}, draw.BoxGlyph{}, draw.TriangleGlyph{}, draw.PyramidGlyph{},
	draw.CrossGlyph{}, draw.PlusGlyph{}, draw.RingGlyph{}, draw.SquareGlyph{},
}

// agentStyle is how one agent is drawn: colour, dash and marker together,
// so that agents stay apart without colour vision.
type agentStyle struct {
	color color.NRGBA
	line  draw.LineStyle
	glyph draw.GlyphStyle
}

func styleFor(i int) agentStyle {
	c := okabeIto[i%len(okabeIto)]
	return agentStyle{
		color: c,
		line:  draw.LineStyle{Color: c, Width: vg.Points(1.6), Dashes: dashes[(i+i/len(dashes))%len(dashes)]},
		glyph: draw.GlyphStyle{Color: c, Radius: vg.Points(2.6), Shape: glyphs[i%len(glyphs)]},
	}
}

func withAlpha(c color.NRGBA, a uint8) color.NRGBA { c.A = a; return c }

var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

func textStyle(c color.Color, size float64) text.Style {
	return text.Style{Color: c, Font: font.From(sans, vg.Points(size)), XAlign: draw.XLeft, YAlign: draw.YBottom, Handler: plot.DefaultTextHandler}
}

// newPanel returns an empty plot with a grid in the report's style.
func newPanel(th theme, title, xlabel, ylabel string) *plot.Plot {
	p := basePanel(th, title, xlabel, ylabel)
	g := plotter.NewGrid()
	g.Vertical = draw.LineStyle{Color: th.grid, Width: vg.Points(0.5)}
	g.Horizontal = g.Vertical
	p.Add(g)
	return p
}

// basePanel returns an empty plot without a grid in the report's style.
func basePanel(th theme, title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.BackgroundColor = nil
	p.Title.Text = title
	p.Title.TextStyle = textStyle(th.ink, 9.5)
	p.Title.TextStyle.XAlign = draw.XCenter
	p.Title.TextStyle.YAlign = draw.YTop
	p.Title.Padding = vg.Points(4)
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle = textStyle(th.ink, 8.5)
		ax.Label.TextStyle.XAlign = draw.XCenter
		ax.Label.TextStyle.YAlign = draw.YBottom
		ax.Tick.Label = textStyle(th.muted, 7.5)
		ax.LineStyle = draw.LineStyle{Color: th.muted, Width: vg.Points(0.6)}
		ax.Tick.LineStyle = draw.LineStyle{Color: th.muted, Width: vg.Points(0.6)}
		ax.Padding = vg.Points(3)
		ax.Tick.Marker = linearTicks{}
	}
	p.X.Label.Text, p.Y.Label.Text = xlabel, ylabel
	p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XCenter, draw.YTop
	p.Y.Tick.Label.XAlign, p.Y.Tick.Label.YAlign = draw.XRight, draw.YCenter
	return p
}

// figure is a titled grid of panels under a legend strip.
type figure struct {
	panels  [][]*plot.Plot // [row][col]; nil entries stay empty
	panelW  vg.Length
	panelH  vg.Length
	legend  func(c draw.Canvas, th theme) vg.Length // draws the legend in the strip, returns its height
	legendH vg.Length
}

func (f *figure) size() (w, h vg.Length) {
	cols := 0
	for _, r := range f.panels {
		cols = max(cols, len(r))
	}
	return vg.Length(cols) * f.panelW, f.legendH + vg.Length(len(f.panels))*f.panelH
}

func (f *figure) draw(c draw.Canvas, th theme) {
	c.SetColor(th.bg)
	c.Fill(c.Rectangle.Path())
	if f.legend != nil {
		strip := c
		strip.Min.Y = c.Max.Y - f.legendH
		f.legend(strip, th)
	}
	body := draw.Crop(c, 0, 0, 0, -f.legendH)
	rows, cols := len(f.panels), 0
	for _, r := range f.panels {
		cols = max(cols, len(r))
	}
	if rows == 0 {
		return
	}
	grid := make([][]*plot.Plot, rows)
	for j := range grid {
		grid[j] = make([]*plot.Plot, cols)
		copy(grid[j], f.panels[j])
	}
	tiles := draw.Tiles{Rows: rows, Cols: cols, PadX: vg.Points(14), PadY: vg.Points(14),
		PadTop: vg.Points(4), PadBottom: vg.Points(6), PadLeft: vg.Points(6), PadRight: vg.Points(10)}
	cs := plot.Align(grid, tiles, body)
	for j := range grid {
		for i, p := range grid[j] {
			if p != nil {
				p.Draw(cs[j][i])
			}
		}
	}
}

// agentLegend returns a legend drawer listing agents with their line, marker
// and colour, wrapping onto more lines as needed, followed by notes.
func agentLegend(agents []string, styleIdx map[string]int, notes ...string) func(draw.Canvas, theme) vg.Length {
	return func(c draw.Canvas, th theme) vg.Length {
		ts := textStyle(th.ink, 8.5)
		ts.YAlign = draw.YCenter
		x, y := c.Min.X+vg.Points(10), c.Max.Y-vg.Points(11)
		for _, a := range agents {
			st := styleFor(styleIdx[a])
			w := vg.Points(26) + ts.Width(a) + vg.Points(14)
			if x+w > c.Max.X && x > c.Min.X+vg.Points(10) {
				x, y = c.Min.X+vg.Points(10), y-vg.Points(14)
			}
			c.StrokeLine2(st.line, x, y, x+vg.Points(22), y)
			c.DrawGlyph(st.glyph, vg.Point{X: x + vg.Points(11), Y: y})
			c.FillText(ts, vg.Point{X: x + vg.Points(26), Y: y}, a)
			x += w
		}
		ns := textStyle(th.muted, 7.5)
		ns.YAlign = draw.YCenter
		for _, n := range notes {
			x, y = c.Min.X+vg.Points(10), y-vg.Points(13)
			c.FillText(ns, vg.Point{X: x, Y: y}, n)
		}
		return c.Max.Y - y + vg.Points(10)
	}
}

// legendHeight measures what agentLegend needs for a figure width w.
func legendHeight(l func(draw.Canvas, theme) vg.Length, w vg.Length) vg.Length {
	c := draw.New(vgimg.New(w, vg.Points(400)))
	return l(c, lightTheme)
}

// addCurve adds a mean line with markers and a 95% CI band for c. yscale
// converts values to display units; points whose mean is not finite (or
// not positive on a log axis) are left out and split the line. With logY
// the y values are log10 of the display values, for an axis set up by
// setRange with logScale.
func addCurve(p *plot.Plot, c Curve, st agentStyle, yscale float64, logY, markers bool) {
	var seg plotter.XYs
	var lo, hi plotter.XYs
	flush := func() {
		if len(lo) >= 2 {
			poly := append(slicesClone(lo), reverse(hi)...)
			if band, err := plotter.NewPolygon(poly); err == nil {
				band.Color = withAlpha(st.color, 46)
				band.LineStyle.Width = 0
				p.Add(band)
			}
		}
		if len(seg) >= 1 {
			if len(seg) >= 2 {
				if l, err := plotter.NewLine(seg); err == nil {
					l.LineStyle = st.line
					p.Add(l)
				}
			}
			if markers || len(seg) == 1 {
				if s, err := plotter.NewScatter(seg); err == nil {
					s.GlyphStyle = st.glyph
					p.Add(s)
				}
			}
		}
		seg, lo, hi = nil, nil, nil
	}
	for _, pt := range c.Points {
		m := pt.Est.Mean * yscale
		if math.IsNaN(m) || math.IsInf(m, 0) || (logY && m <= 0) {
			flush()
			continue
		}
		h := pt.Est.CI95 * yscale
		if math.IsNaN(h) {
			h = 0
		}
		l, u := math.Max(0, m-h), m+h // every charted quantity is non-negative
		if logY {
			// log axes are drawn as log10 of the values on a linear axis
			// (see logAxisTicks)
			if l <= 0 {
				l = m / 10
			}
			m, l, u = math.Log10(m), math.Log10(l), math.Log10(u)
		}
		seg = append(seg, plotter.XY{X: pt.X, Y: m})
		lo, hi = append(lo, plotter.XY{X: pt.X, Y: l}), append(hi, plotter.XY{X: pt.X, Y: u})
	}
	flush()
}

func slicesClone(x plotter.XYs) plotter.XYs { return append(plotter.XYs(nil), x...) }

func reverse(x plotter.XYs) plotter.XYs {
	out := make(plotter.XYs, len(x))
	for i, v := range x {
		out[len(x)-1-i] = v
	}
	return out
}

// timeUnit picks milliseconds or seconds for values up to maxS seconds.
func timeUnit(maxS float64) (scale float64, unit string) {
	if maxS < 1 {
		return 1e3, "ms"
	}
	return 1, "s"
}

// valueRange returns the smallest and largest finite mean and CI ends,
// leaving out lower ends at or below zero.
func valueRange(curves []Curve) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, c := range curves {
		for _, p := range c.Points {
			low := p.Est.Mean - nanZero(p.Est.CI95)
			if low <= 0 { // bands are cut at zero: every charted quantity is non-negative
				low = p.Est.Mean
			}
			for _, v := range []float64{p.Est.Mean, low, p.Est.Mean + nanZero(p.Est.CI95)} {
				if !math.IsNaN(v) && !math.IsInf(v, 0) {
					lo, hi = math.Min(lo, v), math.Max(hi, v)
				}
			}
		}
	}
	return lo, hi
}

func nanZero(x float64) float64 {
	if math.IsNaN(x) {
		return 0
	}
	return x
}

// chart is one rendered chart.
type chart struct {
	ID      string // stable element id and file stem
	Title   string
	Caption string
	build   func(th theme) *figure
}

// displaySize returns the width and height in CSS pixels at which the page
// shows the chart: 1.3 times its natural size (1 pt = 4/3 px), shrunk by
// the page to fit narrower windows.
func (ch *chart) displaySize() (w, h int) {
	fw, fh := ch.build(lightTheme).size()
	return int(math.Round(fw.Points() * 4 / 3 * 1.3)), int(math.Round(fh.Points() * 4 / 3 * 1.3))
}

// svg renders the chart with concrete colours for th.
func (ch *chart) svg(th theme, embedFonts bool) []byte {
	f := ch.build(th)
	w, h := f.size()
	c := vgsvg.NewWith(vgsvg.UseWH(w, h), vgsvg.EmbedFonts(embedFonts))
	f.draw(draw.New(c), th)
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		panic(fmt.Sprintf("report: svg: %v", err)) // writes to memory cannot fail
	}
	return fixSVG(b.Bytes(), ch.Title)
}

// themedSVG renders the chart so that it follows the viewer's colour scheme:
// placeholder colours become CSS variables defined for light and, under
// prefers-color-scheme: dark, dark backgrounds.
func (ch *chart) themedSVG(embedFonts bool) []byte {
	s := string(ch.svg(markTheme, embedFonts))
	vars := []struct{ mark, name, light, dark string }{
		{"#010101", "--ink", "#1b1b1b", "#e8e8e8"},
		{"#020202", "--muted", "#5c5c5c", "#a6a6a6"},
		{"#030303", "--grid", "#dcdcdc", "#3c3c3c"},
		{"#040404", "--bg", "#ffffff", "#1c1c1e"},
	}
	var light, dark strings.Builder
	for _, v := range vars {
		s = strings.ReplaceAll(s, v.mark, "var("+v.name+","+v.light+")")
		fmt.Fprintf(&light, "%s:%s;", v.name, v.light)
		fmt.Fprintf(&dark, "%s:%s;", v.name, v.dark)
	}
	style := "<style>svg{" + light.String() + "}@media (prefers-color-scheme: dark){svg{" + dark.String() + "}}</style>\n"
	i := svgStartEnd(s)
	return []byte(s[:i] + style + s[i:])
}

// fixSVG makes the writer's output stand alone in a browser: a title for
// screen readers, metric-compatible fallback fonts, no generator comment.
func fixSVG(b []byte, title string) []byte {
	s := string(b)
	s = strings.Replace(s, "<!-- Generated by SVGo and Plotinum VG -->\n", "", 1)
	s = strings.ReplaceAll(s, "font-family:Liberation Sans;", "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;")
	j := svgStartEnd(s) - 2 // at the start tag's closing ">\n"
	s = s[:j] + ` role="img">` + "\n<title>" + htmlEscape(title) + "</title>\n" + s[j+2:]
	return []byte(s)
}

// svgStartEnd returns the index just after the "<svg ...>\n" start tag.
func svgStartEnd(s string) int {
	i := strings.Index(s, "<svg ")
	return i + strings.Index(s[i:], ">\n") + 2
}

func htmlEscape(s string) string {
	return strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;").Replace(s)
}

// png renders the chart as PNG at dpi with the light theme.
func (ch *chart) png(dpi float64) []byte {
	f := ch.build(lightTheme)
	w, h := f.size()
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(int(dpi)))
	f.draw(draw.New(c), lightTheme)
	var b bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&b); err != nil {
		panic(fmt.Sprintf("report: png: %v", err))
	}
	return b.Bytes()
}
