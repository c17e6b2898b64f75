//go:build amd64.v3

package fpfuse

const amd64v3 = true
