// Package pipeline runs gapflux's chain for one scan (read, level, grid, form,
// pose, gap, conductance, plate solve, rings, heat-up, verdict) and for a
// folder of scans, and writes the reports, tables, maps and field files.
package pipeline
