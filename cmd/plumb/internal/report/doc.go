// Package report turns a study into what people read: a self-contained HTML
// page with linked, explorable maps, each figure as PDF, PNG and SVG, a
// methods paragraph and a recommendation.
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
// The page (index.html) is built with html/template from embedded files
// (assets/page.html, page.css, table.js, maps.js). Its interactive maps are
// drawn by maps.js into canvases from data stored in the page: coordinates
// quantised to 16 bits per axis and base64-encoded, every layout rotated
// onto one frame; hover, a dragged selection and zoom are shared by all
// maps. Up to 100,000 points per map are drawn in full, above that a
// seeded display sample; a setting's runs show the first 25,000 points of
// the same sample. Ids, labels and column names only ever reach the page as
// template-escaped text or JSON, and the script sets them with textContent.
//
// Figures are drawn once into a small list of shapes laid out in points
// for a journal page (a 7 in, 178 mm two-column width; Liberation Sans at
// 6–8 pt) and written three ways: SVG by our own writer (labels as text,
// cell tooltips as <title>), PDF through gonum's vgpdf (vector, fonts
// embedded, a fixed creation date) and PNG through gonum's vgimg at 300 dpi.
// Layouts of different settings are rotated onto one reference frame with
// ordinary Procrustes (package align) so that panels can be compared by eye.
//
// Colours: labels take a 20-colour palette made by greedy max–min selection
// (Glasbey et al. 2007) so that every pair stays at least 12 CIE ΔE*ab apart
// under normal vision and under simulated protanopia, deuteranopia and
// tritanopia (Machado et al. 2009); with more than 20 labels the 19 largest
// keep their colours and the rest share grey ("other"). Heatmaps use a ramp
// whose lightness falls monotonically from light yellow to dark blue, and
// darker always means better (the scale is reversed for scores where lower
// is better); KL divergence is coloured only within one perplexity.
// Per-point stability uses a light-grey-to-dark-red ramp on a fixed scale
// (never stretched to the values), so unstable points stand out.
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
//   - Glasbey, C., van der Heijden, G., Toh, V. F. K. & Gray, A. Colour
//     displays for categorical images. Color Research & Application 32,
//     304–309, 2007.
//   - Machado, G. M., Oliveira, M. M. & Fernandes, L. A. F. A
//     physiologically-based model for simulation of color vision
//     deficiency. IEEE TVCG 15, 1291–1298, 2009.
package report
