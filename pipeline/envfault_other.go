//go:build !(linux || darwin || freebsd || netbsd || openbsd || dragonfly)

package pipeline

// environmentErrnos is empty where the errno names differ; cancellation and
// permission errors are still recognised.
var environmentErrnos []error
