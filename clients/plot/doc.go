// Package plot draws phase diagrams (log P against T with every curve,
// branch, phase region, triple point and critical point labelled), latent
// heats along each curve, and fit residuals, as PNG or SVG, from data served
// by a phasebound server.
package plot
