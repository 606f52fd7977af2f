// Package report turns a study into what people read: a self-contained HTML
// page, each figure as SVG and PNG, a methods paragraph and a recommendation.
//
// The recommendation is a fixed, stated rule applied to the table of
// per-setting scores (see Rule.Words): faithfulness to the input first
// (median trustworthiness within a tolerance of the best), then stability
// across seeds (median Procrustes disparity, then median kNN Jaccard, each
// within a tolerance of the best), then the lowest median KL divergence. The
// page shows every step, the runner-up and the settings that cannot be told
// apart from the pick, because a recommendation from a handful of seeds
// supports the analyst's judgement and does not replace it.
//
// Figures are drawn once into a small list of shapes and then written both
// as SVG (labels as real text) and as PNG (image/png at twice the SVG's
// pixel size, labels in a 5×7 bitmap font of our own). Layouts of different settings are rotated
// onto one reference frame with ordinary Procrustes (package align) so that
// panels can be compared by eye.
//
// Colours: categories use seven colours of our own, chosen so that every
// pair differs by at least 15 units in CIELAB lightness and yellow–blue
// (L*, b*) alone — the red–green axis a* is the one lost in the commonest
// colour vision deficiencies — and by at least 40 units in full CIELAB;
// the test checks both. Continuous values use a ramp whose lightness falls
// monotonically from light yellow to dark blue, so it reads in greyscale.
//
// References:
//   - van der Maaten, L. & Hinton, G. Visualizing Data using t-SNE. JMLR 9,
//     2579–2605, 2008.
//   - Wattenberg, M., Viégas, F. & Johnson, I. How to Use t-SNE Effectively.
//     Distill, 2016.
//   - Venna, J. & Kaski, S. Neighborhood preservation in nonlinear
//     projection methods: an experimental study. ICANN 2001.
//   - Schönemann, P. H. A generalized solution of the orthogonal Procrustes
//     problem. Psychometrika 31, 1–10, 1966.
//   - CIE 15:2004, Colorimetry (the CIELAB formulas used in the palette
//     test).
package report
