//go:build !unix

package stl

import "time"

func cpuTime() time.Duration { return 0 }
