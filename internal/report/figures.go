package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"math"
	"regexp"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// maxPlotPoints bounds the samples of one drawn history.
const maxPlotPoints = 2000

// Palette of the figures: dark ink, one cool accent for data, one warm
// accent for marks that need the eye (baseline, optimum, extrapolation).
var (
	colInk      = color.RGBA{R: 0x1d, G: 0x27, B: 0x33, A: 0xff}
	colAccent   = color.RGBA{R: 0x1f, G: 0x5f, B: 0x8b, A: 0xff}
	colWarm     = color.RGBA{R: 0xb5, G: 0x52, B: 0x1b, A: 0xff}
	colGrid     = color.RGBA{R: 0xdd, G: 0xe1, B: 0xe6, A: 0xff}
	colDiscard  = color.RGBA{R: 0xe4, G: 0xe4, B: 0xe4, A: 0xff}
	colBand     = color.NRGBA{R: 0x1f, G: 0x5f, B: 0x8b, A: 0x48}
	colWarmBand = color.NRGBA{R: 0xb5, G: 0x52, B: 0x1b, A: 0x38}
	colHistory  = color.RGBA{R: 0x55, G: 0x5f, B: 0x6b, A: 0xff}
)

// z95 is the two-sided 95 % quantile of the standard normal distribution.
const z95 = 1.959963984540054

// newPlot returns a plot with the house style: sans-serif text, light
// grid, axis labels with units.
func newPlot(xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	sans := func(f *font.Font) { f.Variant = "Sans" }
	sans(&p.Title.TextStyle.Font)
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		sans(&a.Label.TextStyle.Font)
		sans(&a.Tick.Label.Font)
		a.Label.TextStyle.Font.Size = vg.Points(10)
		a.Tick.Label.Font.Size = vg.Points(9)
		a.Color = colInk
		a.Label.TextStyle.Color = colInk
		a.Tick.Label.Color = colInk
	}
	sans(&p.Legend.TextStyle.Font)
	p.Legend.TextStyle.Font.Size = vg.Points(9)
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	g := plotter.NewGrid()
	g.Vertical.Color = colGrid
	g.Horizontal.Color = colGrid
	p.Add(g)
	return p
}

// withUnit returns "name (unit)", or name alone when unit is empty.
func withUnit(name, unit string) string {
	if unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

var svgProlog = regexp.MustCompile(`(?s)\A.*?(<svg\b)`)

// toSVG draws d on a w×h SVG canvas and returns the <svg> element alone,
// ready to be written into the page. The canvas escapes all text it
// draws (html.EscapeString), so the result is safe as template.HTML.
func toSVG(w, h vg.Length, d func(draw.Canvas)) (template.HTML, error) {
	c := vgsvg.New(w, h)
	d(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return "", fmt.Errorf("report: write figure: %w", err)
	}
	// Drop the XML declaration and generator comment: they are not
	// allowed inside an HTML document.
	out := svgProlog.ReplaceAll(buf.Bytes(), []byte("$1"))
	return template.HTML(out), nil
}

func plotSVG(p *plot.Plot, w, h vg.Length) (template.HTML, error) {
	return toSVG(w, h, p.Draw)
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// decimate returns at most maxPts samples of the series (t, y) for
// drawing. The first and last samples are kept; the rest is cut into
// (maxPts−2)/2 buckets of equal sample count, and each bucket keeps its
// smallest and largest value in time order, so that peaks and the
// envelope of an oscillating force survive (min–max decimation, common
// practice in plotting long signals). Non-finite samples are dropped.
func decimate(t, y []float64, maxPts int) (xs, ys []float64) {
	if maxPts < 4 {
		panic("report: decimate needs maxPts >= 4")
	}
	n := min(len(t), len(y))
	xs = make([]float64, 0, min(n, maxPts))
	ys = make([]float64, 0, min(n, maxPts))
	if n <= maxPts {
		for i := range n {
			if finite(t[i]) && finite(y[i]) {
				xs = append(xs, t[i])
				ys = append(ys, y[i])
			}
		}
		return xs, ys
	}
	add := func(i int) {
		if finite(t[i]) && finite(y[i]) {
			xs = append(xs, t[i])
			ys = append(ys, y[i])
		}
	}
	add(0)
	nb := (maxPts - 2) / 2
	inner := n - 2
	for b := range nb {
		lo := 1 + b*inner/nb
		hi := 1 + (b+1)*inner/nb
		imin, imax := -1, -1
		for i := lo; i < hi; i++ {
			if !finite(t[i]) || !finite(y[i]) {
				continue
			}
			if imin < 0 || y[i] < y[imin] {
				imin = i
			}
			if imax < 0 || y[i] > y[imax] {
				imax = i
			}
		}
		switch {
		case imin < 0:
		case imin == imax:
			add(imin)
		case imin < imax:
			add(imin)
			add(imax)
		default:
			add(imax)
			add(imin)
		}
	}
	add(n - 1)
	return xs, ys
}

func xys(x, y []float64) plotter.XYs {
	pts := make(plotter.XYs, 0, len(x))
	for i := range x {
		if finite(x[i]) && finite(y[i]) {
			pts = append(pts, plotter.XY{X: x[i], Y: y[i]})
		}
	}
	return pts
}

func rect(x0, x1, y0, y1 float64, fill color.Color) (*plotter.Polygon, error) {
	poly, err := plotter.NewPolygon(plotter.XYs{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}})
	if err != nil {
		return nil, err
	}
	poly.Color = fill
	poly.LineStyle.Width = 0
	return poly, nil
}

func hline(x0, x1, y float64, c color.Color, width vg.Length, dashes ...vg.Length) (*plotter.Line, error) {
	l, err := plotter.NewLine(plotter.XYs{{X: x0, Y: y}, {X: x1, Y: y}})
	if err != nil {
		return nil, err
	}
	l.Color = c
	l.Width = width
	l.Dashes = dashes
	return l, nil
}

// historyFigure draws one quantity's history: the discarded transient
// [Time[0], TransientEnd] shaded grey, the signal, and over the averaging
// window the mean line with its 95 % band.
func historyFigure(q QuantitySeries) (template.HTML, error) {
	t, y := decimate(q.Time, q.Value, maxPlotPoints)
	if len(t) < 2 {
		return "", nil
	}
	p := newPlot("time (s)", withUnit(q.Name, q.Unit))
	t0, t1 := t[0], t[len(t)-1]
	ylo, yhi := historyRange(t, y, q)

	avgStart := t0
	if finite(q.TransientEnd) && q.TransientEnd > t0 {
		te := min(q.TransientEnd, t1)
		r, err := rect(t0, te, ylo, yhi, colDiscard)
		if err != nil {
			return "", err
		}
		p.Add(r)
		avgStart = te
	}
	if finite(q.Mean) && finite(q.HalfWidth) && q.HalfWidth > 0 && avgStart < t1 {
		r, err := rect(avgStart, t1, q.Mean-q.HalfWidth, q.Mean+q.HalfWidth, colBand)
		if err != nil {
			return "", err
		}
		p.Add(r)
	}
	l, err := plotter.NewLine(xys(t, y))
	if err != nil {
		return "", err
	}
	l.Color = colHistory
	l.Width = vg.Points(0.6)
	p.Add(l)
	if finite(q.Mean) && avgStart < t1 {
		m, err := hline(avgStart, t1, q.Mean, colAccent, vg.Points(1.4))
		if err != nil {
			return "", err
		}
		p.Add(m)
	}
	// Set the frame last: Add widens it to the data, and the transient
	// is meant to be clipped.
	p.Y.Min, p.Y.Max = ylo, yhi
	p.X.Min, p.X.Max = t0, t1
	return plotSVG(p, vg.Points(520), vg.Points(240))
}

// historyRange returns the vertical range of a history figure. It frames
// the samples after the transient and the mean band, padded by a quarter
// of their span, so that the averaged part stays readable when the
// start-up transient is far larger; the transient is then clipped at the
// frame. Without a transient the whole series is framed.
func historyRange(t, y []float64, q QuantitySeries) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	hasTransient := finite(q.TransientEnd) && q.TransientEnd > t[0]
	for i, v := range y {
		if !hasTransient || t[i] >= q.TransientEnd {
			lo, hi = min(lo, v), max(hi, v)
		}
	}
	if lo > hi { // the transient covers the whole record
		for _, v := range y {
			lo, hi = min(lo, v), max(hi, v)
		}
	}
	if finite(q.Mean) && finite(q.HalfWidth) && q.HalfWidth > 0 {
		lo, hi = min(lo, q.Mean-q.HalfWidth), max(hi, q.Mean+q.HalfWidth)
	}
	if hi == lo {
		d := max(math.Abs(lo)*0.01, 1e-12)
		return lo - d, hi + d
	}
	pad := 0.25 * (hi - lo)
	if !hasTransient {
		pad = 0.04 * (hi - lo)
	}
	return lo - pad, hi + pad
}

// rankingFigure draws the ranked means as dots with their 95 % error
// bars, best at the top; the baseline mean, when ranked, is a dashed
// vertical line.
func rankingFigure(rows []RankRow, baseline, xlabel string) (template.HTML, error) {
	n := len(rows)
	if n == 0 {
		return "", nil
	}
	p := newPlot(xlabel, "")
	pts := make(plotter.XYs, 0, n)
	errs := make(plotter.XErrors, 0, n)
	names := make([]string, n)
	for i, r := range rows {
		names[n-1-i] = r.Label
		if !finite(r.Mean) {
			continue
		}
		hw := r.HalfWidth
		if !finite(hw) || hw < 0 {
			hw = 0
		}
		pts = append(pts, plotter.XY{X: r.Mean, Y: float64(n - 1 - i)})
		errs = append(errs, struct{ Low, High float64 }{-hw, hw})
	}
	if len(pts) > 0 {
		eb, err := plotter.NewXErrorBars(struct {
			plotter.XYer
			plotter.XErrorer
		}{pts, errs})
		if err != nil {
			return "", err
		}
		eb.Color = colAccent
		eb.Width = vg.Points(1.2)
		eb.CapWidth = vg.Points(6)
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return "", err
		}
		sc.GlyphStyle.Shape = draw.CircleGlyph{}
		sc.GlyphStyle.Color = colInk
		sc.GlyphStyle.Radius = vg.Points(3)
		p.Add(eb, sc)
	}
	for _, r := range rows {
		if baseline != "" && r.Label == baseline && finite(r.Mean) {
			l, err := plotter.NewLine(plotter.XYs{{X: r.Mean, Y: -0.5}, {X: r.Mean, Y: float64(n) - 0.5}})
			if err != nil {
				return "", err
			}
			l.Color = colWarm
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
			p.Add(l)
			p.Legend.Add("baseline", l)
			p.Legend.Top = true
		}
	}
	p.NominalY(names...)
	p.Y.Min, p.Y.Max = -0.7, float64(n)-0.3
	return plotSVG(p, vg.Points(520), vg.Points(float64(70+18*n)))
}

// grid adapts a Contour to plotter.GridXYZ: column c is X[c], row r is Y[r].
type grid struct{ c *Contour }

func (g grid) Dims() (int, int)   { return len(g.c.X), len(g.c.Y) }
func (g grid) Z(c, r int) float64 { return g.c.Z[r][c] }
func (g grid) X(c int) float64    { return g.c.X[c] }
func (g grid) Y(r int) float64    { return g.c.Y[r] }
func (g grid) minMax() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, row := range g.c.Z {
		for _, v := range row {
			if finite(v) {
				lo, hi = min(lo, v), max(hi, v)
			}
		}
	}
	return lo, hi
}

// cells draws a gridded surface as filled cells coloured by cmap. Cell
// edges lie halfway between grid coordinates; the outer cells extend half
// a step beyond the first and last coordinates. Each cell is also stroked
// in its own colour so that no seam shows between neighbours.
type cells struct {
	g    grid
	cmap palette.ColorMap
}

// edges returns the n+1 cell edges around the n coordinates v.
func edges(v []float64) []float64 {
	n := len(v)
	e := make([]float64, n+1)
	for i := 1; i < n; i++ {
		e[i] = (v[i-1] + v[i]) / 2
	}
	e[0] = v[0] - (v[1]-v[0])/2
	e[n] = v[n-1] + (v[n-1]-v[n-2])/2
	return e
}

func (h cells) DataRange() (xmin, xmax, ymin, ymax float64) {
	ex, ey := edges(h.g.c.X), edges(h.g.c.Y)
	return min(ex[0], ex[len(ex)-1]), max(ex[0], ex[len(ex)-1]), min(ey[0], ey[len(ey)-1]), max(ey[0], ey[len(ey)-1])
}

func (h cells) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	ex, ey := edges(h.g.c.X), edges(h.g.c.Y)
	for j, row := range h.g.c.Z {
		for i, z := range row {
			col, err := h.cmap.At(z)
			if err != nil { // NaN or outside the range: leave blank
				continue
			}
			x0, x1 := trX(ex[i]), trX(ex[i+1])
			y0, y1 := trY(ey[j]), trY(ey[j+1])
			pts := []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}
			c.FillPolygon(col, c.ClipPolygonXY(pts))
			c.StrokeLines(draw.LineStyle{Color: col, Width: vg.Points(0.4)}, c.ClipLinesXY(append(pts, pts[0]))...)
		}
	}
}

func checkContour(c *Contour) error {
	if len(c.X) < 2 || len(c.Y) < 2 {
		return fmt.Errorf("report: contour %s/%s: need at least 2×2 grid points, have %d×%d", c.XName, c.YName, len(c.X), len(c.Y))
	}
	for _, ax := range []struct {
		name string
		v    []float64
	}{{"X", c.X}, {"Y", c.Y}} {
		for i := 1; i < len(ax.v); i++ {
			if !(ax.v[i] > ax.v[i-1]) {
				return fmt.Errorf("report: contour %s/%s: %s must be strictly increasing", c.XName, c.YName, ax.name)
			}
		}
	}
	if len(c.Z) != len(c.Y) {
		return fmt.Errorf("report: contour %s/%s: Z has %d rows, want len(Y) = %d", c.XName, c.YName, len(c.Z), len(c.Y))
	}
	for j, row := range c.Z {
		if len(row) != len(c.X) {
			return fmt.Errorf("report: contour %s/%s: Z row %d has %d values, want len(X) = %d", c.XName, c.YName, j, len(row), len(c.X))
		}
	}
	return nil
}

// contourLevels returns n evenly spaced levels strictly inside (lo, hi).
func contourLevels(lo, hi float64, n int) []float64 {
	lv := make([]float64, n)
	for i := range lv {
		lv[i] = lo + (hi-lo)*float64(i+1)/float64(n+1)
	}
	return lv
}

// contourFigure draws the surface over one parameter pair as a heat map
// with contour lines and a colour bar, the runs as open circles and the
// optimum as a cross.
func contourFigure(c *Contour, response string) (template.HTML, error) {
	if err := checkContour(c); err != nil {
		return "", err
	}
	g := grid{c}
	lo, hi := g.minMax()
	if !(lo < hi) {
		return "", fmt.Errorf("report: contour %s/%s: the surface is flat or undefined", c.XName, c.YName)
	}
	cmap := scaleFor(lo, hi)

	p := newPlot(c.XName, c.YName)
	p.Add(cells{g, cmap})
	ct := plotter.NewContour(g, contourLevels(lo, hi, 9), nil)
	ct.LineStyles = []draw.LineStyle{{Color: color.RGBA{A: 0x99}, Width: vg.Points(0.5)}}
	p.Add(ct)
	if runs := xys(c.RunsX, c.RunsY); len(runs) > 0 {
		sc, err := plotter.NewScatter(runs)
		if err != nil {
			return "", err
		}
		sc.GlyphStyle = draw.GlyphStyle{Shape: haloGlyph{draw.RingGlyph{}}, Color: colInk, Radius: vg.Points(3)}
		p.Add(sc)
	}
	if finite(c.OptX) && finite(c.OptY) {
		opt, err := plotter.NewScatter(plotter.XYs{{X: c.OptX, Y: c.OptY}})
		if err != nil {
			return "", err
		}
		opt.GlyphStyle = draw.GlyphStyle{Shape: haloGlyph{draw.CrossGlyph{}}, Color: color.Black, Radius: vg.Points(5)}
		p.Add(opt)
	}

	cb, err := colourBar(cmap, response)
	if err != nil {
		return "", err
	}

	w, h := vg.Points(520), vg.Points(360)
	return toSVG(w, h, func(dc draw.Canvas) {
		barW := vg.Points(90)
		main := draw.Crop(dc, 0, -barW, 0, 0)
		bar := draw.Crop(dc, w-barW+vg.Points(10), 0, vg.Points(30), vg.Points(-10))
		p.Draw(main)
		cb.Draw(bar)
	})
}

// colourBar returns a plot of the colour scale as a stack of filled
// bands, drawn as polygons rather than as an embedded image so that it
// scales with the figure.
func colourBar(cmap palette.ColorMap, label string) (*plot.Plot, error) {
	const n = 64
	p := newPlot("", label)
	lo, hi := cmap.Min(), cmap.Max()
	for k := range n {
		y0 := lo + (hi-lo)*float64(k)/n
		y1 := lo + (hi-lo)*float64(k+1)/n
		c, err := cmap.At((y0 + y1) / 2)
		if err != nil {
			return nil, err
		}
		r, err := rect(0, 1, y0, y1, c)
		if err != nil {
			return nil, err
		}
		r.LineStyle = draw.LineStyle{Color: c, Width: vg.Points(0.3)}
		p.Add(r)
	}
	p.HideX()
	p.X.Min, p.X.Max = 0, 1
	p.Y.Min, p.Y.Max = lo, hi
	return p, nil
}

// looFigure draws the leave-one-out prediction of each run against its
// observed value, with the 1:1 line.
func looFigure(s *Surface) (template.HTML, error) {
	pts := xys(s.Observed, s.LOOPredicted)
	if len(pts) == 0 {
		return "", nil
	}
	lo, hi := pts[0].X, pts[0].X
	for _, q := range pts {
		lo, hi = min(lo, q.X, q.Y), max(hi, q.X, q.Y)
	}
	if lo == hi {
		lo, hi = lo-1, hi+1
	}
	pad := 0.05 * (hi - lo)
	lo, hi = lo-pad, hi+pad
	p := newPlot("observed "+s.Response, "leave-one-out prediction of "+s.Response)
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = lo, hi, lo, hi
	one, err := plotter.NewLine(plotter.XYs{{X: lo, Y: lo}, {X: hi, Y: hi}})
	if err != nil {
		return "", err
	}
	one.Color = colWarm
	one.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return "", err
	}
	sc.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Color: colAccent, Radius: vg.Points(3)}
	p.Add(one, sc)
	p.Legend.Add("1:1", one)
	p.Legend.Top = true
	p.Legend.Left = true
	if len(s.Labels) == len(s.Observed) && len(pts) == len(s.Observed) && len(pts) <= 30 {
		lb, err := plotter.NewLabels(plotter.XYLabels{XYs: pts, Labels: s.Labels})
		if err != nil {
			return "", err
		}
		for i := range lb.TextStyle {
			lb.TextStyle[i].Font.Variant = "Sans"
			lb.TextStyle[i].Font.Size = vg.Points(7)
			lb.TextStyle[i].Color = colHistory
			lb.TextStyle[i].XAlign = draw.XLeft
		}
		lb.Offset = vg.Point{X: vg.Points(4), Y: vg.Points(2)}
		p.Add(lb)
	}
	return plotSVG(p, vg.Points(340), vg.Points(320))
}

// sensitivityFigure draws the first-order and total Sobol' indices of
// each parameter as paired bars with 95 % error bars (±1.96 SE).
func sensitivityFigure(ss []Sensitivity) (template.HTML, error) {
	if len(ss) == 0 {
		return "", nil
	}
	p := newPlot("", "Sobol' index (–)")
	names := make([]string, len(ss))
	var first, total plotter.XYs
	var firstE, totalE plotter.YErrors
	const half = 0.36
	var legendFirst, legendTotal *plotter.Polygon
	ymax := 0.0
	for i, s := range ss {
		names[i] = s.Param
		x := float64(i)
		for k, v := range []struct {
			val, se float64
			x0, x1  float64
			col     color.Color
		}{
			{s.First, s.FirstSE, x - half, x - 0.01, colAccent},
			{s.Total, s.TotalSE, x + 0.01, x + half, colWarm},
		} {
			if !finite(v.val) {
				continue
			}
			r, err := rect(v.x0, v.x1, 0, v.val, v.col)
			if err != nil {
				return "", err
			}
			p.Add(r)
			se := 0.0
			if finite(v.se) && v.se > 0 {
				se = z95 * v.se
			}
			ymax = max(ymax, v.val+se)
			pt := plotter.XY{X: (v.x0 + v.x1) / 2, Y: v.val}
			e := struct{ Low, High float64 }{-se, se}
			if k == 0 {
				first, firstE, legendFirst = append(first, pt), append(firstE, e), r
			} else {
				total, totalE, legendTotal = append(total, pt), append(totalE, e), r
			}
		}
	}
	for _, set := range []struct {
		pts plotter.XYs
		e   plotter.YErrors
	}{{first, firstE}, {total, totalE}} {
		if len(set.pts) == 0 {
			continue
		}
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{set.pts, set.e})
		if err != nil {
			return "", err
		}
		eb.Color = colInk
		eb.CapWidth = vg.Points(5)
		p.Add(eb)
	}
	if legendFirst != nil {
		p.Legend.Add("first order", legendFirst)
	}
	if legendTotal != nil {
		p.Legend.Add("total", legendTotal)
	}
	p.Legend.Top = true
	p.NominalX(names...)
	p.X.Min, p.X.Max = -0.6, float64(len(ss))-0.4
	p.Y.Min = 0
	p.Y.Max = max(1, ymax*1.05)
	return plotSVG(p, vg.Points(max(300, 60+70*float64(len(ss)))), vg.Points(260))
}

// gciBand returns the fine-grid value φ1 and the numerical uncertainty
// band φ1 ± GCI·|φ1| of a mesh study (Celik et al. 2008, eq. 7 and the
// reporting of §5: GCI_fine21 is relative to the fine-grid solution).
// ok is false when the study has no usable fine grid or GCI.
func gciBand(m MeshStudy) (fine, lo, hi float64, ok bool) {
	i := fineIndex(m)
	if i < 0 || !finite(m.GCI) || m.GCI < 0 {
		return 0, 0, 0, false
	}
	fine = m.Value[i]
	d := m.GCI * math.Abs(fine)
	return fine, fine - d, fine + d, true
}

// fineIndex returns the index of the smallest positive cell size, or -1.
func fineIndex(m MeshStudy) int {
	best := -1
	for i := range min(len(m.H), len(m.Value)) {
		if finite(m.H[i]) && m.H[i] > 0 && finite(m.Value[i]) && (best < 0 || m.H[i] < m.H[best]) {
			best = i
		}
	}
	return best
}

// meshFigure draws the value on each grid against its cell size with 95 %
// error bars, the Richardson-extrapolated value as a dashed line marked
// at h = 0, and the GCI band over [0, h_fine].
func meshFigure(m MeshStudy, ylabel string) (template.HTML, error) {
	n := min(len(m.H), len(m.Value))
	pts := make(plotter.XYs, 0, n)
	errs := make(plotter.YErrors, 0, n)
	hmax := 0.0
	for i := range n {
		if !finite(m.H[i]) || !finite(m.Value[i]) {
			continue
		}
		hw := 0.0
		if i < len(m.HalfWidth) && finite(m.HalfWidth[i]) && m.HalfWidth[i] > 0 {
			hw = m.HalfWidth[i]
		}
		pts = append(pts, plotter.XY{X: m.H[i], Y: m.Value[i]})
		errs = append(errs, struct{ Low, High float64 }{-hw, hw})
		hmax = max(hmax, m.H[i])
	}
	if len(pts) == 0 || !(hmax > 0) {
		return "", nil
	}
	p := newPlot("representative cell size h", ylabel)
	p.X.Min, p.X.Max = 0, hmax*1.08
	if fine, lo, hi, ok := gciBand(m); ok && hi > lo {
		r, err := rect(0, m.H[fineIndex(m)], lo, hi, colWarmBand)
		if err != nil {
			return "", err
		}
		p.Add(r)
		_ = fine
	}
	if finite(m.Extrapolated) {
		l, err := hline(0, p.X.Max, m.Extrapolated, colWarm, vg.Points(1), vg.Points(4), vg.Points(3))
		if err != nil {
			return "", err
		}
		at0, err := plotter.NewScatter(plotter.XYs{{X: 0, Y: m.Extrapolated}})
		if err != nil {
			return "", err
		}
		at0.GlyphStyle = draw.GlyphStyle{Shape: draw.BoxGlyph{}, Color: colWarm, Radius: vg.Points(3.5)}
		p.Add(l, at0)
	}
	ln, err := plotter.NewLine(pts)
	if err != nil {
		return "", err
	}
	ln.Color = colGrid
	ln.Width = vg.Points(1)
	eb, err := plotter.NewYErrorBars(struct {
		plotter.XYer
		plotter.YErrorer
	}{pts, errs})
	if err != nil {
		return "", err
	}
	eb.Color = colAccent
	eb.CapWidth = vg.Points(6)
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return "", err
	}
	sc.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Color: colInk, Radius: vg.Points(3)}
	p.Add(ln, eb, sc)
	p.X.Min, p.X.Max = 0, hmax*1.08
	span := p.Y.Max - p.Y.Min
	if !(span > 0) {
		span = math.Max(math.Abs(p.Y.Max), 1) * 0.02
	}
	p.Y.Min, p.Y.Max = p.Y.Min-0.08*span, p.Y.Max+0.08*span
	return plotSVG(p, vg.Points(460), vg.Points(280))
}

// haloGlyph draws its glyph over a white disc, so that a marker stays
// visible on both the dark and the light end of a colour scale.
type haloGlyph struct{ draw.GlyphDrawer }

func (h haloGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetColor(color.White)
	draw.CircleGlyph{}.DrawGlyph(c, draw.GlyphStyle{Radius: sty.Radius * 1.2}, pt)
	c.SetColor(sty.Color)
	h.GlyphDrawer.DrawGlyph(c, sty, pt)
}

// curveFigure draws a one-parameter surface: the fitted mean as a line in
// its 95 % band, and the runs as dots with their own 95 % error bars.
func curveFigure(c *Curve, response string) (template.HTML, error) {
	if c == nil || len(c.X) < 2 {
		return "", nil
	}
	p := newPlot(c.Param, response)
	var band plotter.XYs
	var line plotter.XYs
	for i, x := range c.X {
		if finite(c.Mean[i]) {
			line = append(line, plotter.XY{X: x, Y: c.Mean[i]})
		}
	}
	for i, x := range c.X {
		if finite(c.Mean[i]) && finite(c.HalfWidth[i]) {
			band = append(band, plotter.XY{X: x, Y: c.Mean[i] + c.HalfWidth[i]})
		}
	}
	for i := len(c.X) - 1; i >= 0; i-- {
		if finite(c.Mean[i]) && finite(c.HalfWidth[i]) {
			band = append(band, plotter.XY{X: c.X[i], Y: c.Mean[i] - c.HalfWidth[i]})
		}
	}
	if len(band) >= 3 {
		poly, err := plotter.NewPolygon(band)
		if err != nil {
			return "", err
		}
		poly.Color = colBand
		poly.LineStyle.Width = 0
		p.Add(poly)
		p.Legend.Add("95 % interval of the fit", poly)
	}
	if len(line) >= 2 {
		l, err := plotter.NewLine(line)
		if err != nil {
			return "", err
		}
		l.Color = colAccent
		l.Width = vg.Points(1.5)
		p.Add(l)
		p.Legend.Add("fitted mean", l)
	}
	var runs plotter.XYs
	var errs plotter.YErrors
	for i := range c.RunX {
		if !finite(c.RunY[i]) {
			continue
		}
		hw := 0.0
		if i < len(c.RunHalfWide) && finite(c.RunHalfWide[i]) {
			hw = c.RunHalfWide[i]
		}
		runs = append(runs, plotter.XY{X: c.RunX[i], Y: c.RunY[i]})
		errs = append(errs, struct{ Low, High float64 }{-hw, hw})
	}
	if len(runs) > 0 {
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{runs, errs})
		if err != nil {
			return "", err
		}
		eb.Color = colInk
		eb.CapWidth = vg.Points(6)
		sc, err := plotter.NewScatter(runs)
		if err != nil {
			return "", err
		}
		sc.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Color: colInk, Radius: vg.Points(3)}
		p.Add(eb, sc)
		p.Legend.Add("runs, 95 % interval", sc)
	}
	p.Legend.Top = true
	return plotSVG(p, vg.Points(520), vg.Points(320))
}

// tradeoffFigure plots the variants in the plane of the first two
// objectives, each with its 95 % error bars in both: the front of the
// means in the accent colour, joined in order, the rest in grey, and the
// front the surfaces predict as a dashed line.
func tradeoffFigure(t *Tradeoff) (template.HTML, error) {
	if t == nil || len(t.Objectives) < 2 || len(t.Rows) == 0 {
		return "", nil
	}
	label := func(j int) string {
		u := ""
		if j < len(t.Units) {
			u = t.Units[j]
		}
		return fmt.Sprintf("%s, %s is better", withUnit(t.Objectives[j], u), t.Better[j])
	}
	p := newPlot(label(0), label(1))
	if len(t.Predicted) >= 2 {
		var pts plotter.XYs
		for _, y := range t.Predicted {
			if finite(y[0]) && finite(y[1]) {
				pts = append(pts, plotter.XY{X: y[0], Y: y[1]})
			}
		}
		if len(pts) >= 2 {
			l, err := plotter.NewLine(pts)
			if err != nil {
				return "", err
			}
			l.Color = colWarm
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
			p.Add(l)
		}
	}
	var front plotter.XYs
	for _, group := range []struct {
		front bool
		col   color.Color
	}{{false, colHistory}, {true, colAccent}} {
		var pts plotter.XYs
		var xe plotter.XErrors
		var ye plotter.YErrors
		var names []string
		for _, r := range t.Rows {
			if r.Front != group.front || !finite(r.Mean[0]) || !finite(r.Mean[1]) {
				continue
			}
			hx, hy := r.HalfWidth[0], r.HalfWidth[1]
			if !finite(hx) {
				hx = 0
			}
			if !finite(hy) {
				hy = 0
			}
			pts = append(pts, plotter.XY{X: r.Mean[0], Y: r.Mean[1]})
			xe = append(xe, struct{ Low, High float64 }{-hx, hx})
			ye = append(ye, struct{ Low, High float64 }{-hy, hy})
			names = append(names, r.Label)
		}
		if len(pts) == 0 {
			continue
		}
		ex, err := plotter.NewXErrorBars(struct {
			plotter.XYer
			plotter.XErrorer
		}{pts, xe})
		if err != nil {
			return "", err
		}
		ey, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{pts, ye})
		if err != nil {
			return "", err
		}
		ex.Color, ey.Color = group.col, group.col
		ex.CapWidth, ey.CapWidth = vg.Points(4), vg.Points(4)
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return "", err
		}
		sc.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Color: group.col, Radius: vg.Points(3)}
		p.Add(ex, ey, sc)
		if group.front {
			front = pts
			if len(pts) <= 30 {
				lb, err := plotter.NewLabels(plotter.XYLabels{XYs: pts, Labels: names})
				if err != nil {
					return "", err
				}
				for i := range lb.TextStyle {
					lb.TextStyle[i].Font.Variant = "Sans"
					lb.TextStyle[i].Font.Size = vg.Points(7)
					lb.TextStyle[i].Color = colInk
					lb.TextStyle[i].XAlign = draw.XLeft
				}
				lb.Offset = vg.Point{X: vg.Points(4), Y: vg.Points(2)}
				p.Add(lb)
			}
		}
	}
	if len(front) >= 2 {
		sorted := append(plotter.XYs(nil), front...)
		sort.Slice(sorted, func(a, b int) bool { return sorted[a].X < sorted[b].X })
		l, err := plotter.NewLine(sorted)
		if err != nil {
			return "", err
		}
		l.Color = colAccent
		l.Width = vg.Points(0.8)
		p.Add(l)
	}
	// The axes hold every error bar and predicted point with a margin;
	// the objectives' own limits are dotted across them.
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, r := range t.Rows {
		if !finite(r.Mean[0]) || !finite(r.Mean[1]) {
			continue
		}
		hx, hy := math.Max(0, at(r.HalfWidth, 0)), math.Max(0, at(r.HalfWidth, 1))
		if !finite(hx) {
			hx = 0
		}
		if !finite(hy) {
			hy = 0
		}
		xmin, xmax = math.Min(xmin, r.Mean[0]-hx), math.Max(xmax, r.Mean[0]+hx)
		ymin, ymax = math.Min(ymin, r.Mean[1]-hy), math.Max(ymax, r.Mean[1]+hy)
	}
	for _, y := range t.Predicted {
		if finite(y[0]) && finite(y[1]) {
			xmin, xmax = math.Min(xmin, y[0]), math.Max(xmax, y[0])
			ymin, ymax = math.Min(ymin, y[1]), math.Max(ymax, y[1])
		}
	}
	if !(xmax > xmin) {
		xmin, xmax = xmin-1, xmax+1
	}
	if !(ymax > ymin) {
		ymin, ymax = ymin-1, ymax+1
	}
	padX, padY := 0.06*(xmax-xmin), 0.06*(ymax-ymin)
	xmin, xmax, ymin, ymax = xmin-padX, xmax+padX, ymin-padY, ymax+padY
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = xmin, xmax, ymin, ymax
	for j := range 2 {
		for _, v := range []float64{at(t.Lo, j), at(t.Hi, j)} {
			if !finite(v) {
				continue
			}
			var seg plotter.XYs
			if j == 0 {
				seg = plotter.XYs{{X: v, Y: ymin}, {X: v, Y: ymax}}
			} else {
				seg = plotter.XYs{{X: xmin, Y: v}, {X: xmax, Y: v}}
			}
			l, err := plotter.NewLine(seg)
			if err != nil {
				return "", err
			}
			l.Color = colWarm
			l.Dashes = []vg.Length{vg.Points(1), vg.Points(2)}
			p.Add(l)
		}
	}
	return plotSVG(p, vg.Points(560), vg.Points(400))
}

// at returns v[j], or NaN beyond its end.
func at(v []float64, j int) float64 {
	if j < len(v) {
		return v[j]
	}
	return math.NaN()
}
