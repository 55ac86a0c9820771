// Package report writes a study as one self-contained HTML file: inline
// CSS, figures as inline SVG drawn with gonum/plot, no script, no fetch of
// any external font, image or style sheet. The page opens offline and can
// be attached to an e-mail; collapsible parts use <details>.
//
// The page has five parts: a header (recipe, state counts, caution), the
// ranking table with a dot plot of the 95 % intervals, one collapsible
// block per variant (force histories with the discarded transient shaded
// and the averaging band), the response surface when one was fitted
// (contour maps, leave-one-out check, sensitivity indices) and the mesh
// studies (value against cell size, Richardson extrapolation, GCI band).
//
// All study text is escaped by html/template; text drawn inside the
// figures is escaped by the SVG canvas (html.EscapeString).
package report
