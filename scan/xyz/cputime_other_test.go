//go:build !unix

package xyz

import "time"

func cpuTime() time.Duration { return 0 }
