package pipeline

import (
	"context"
	"os"
	"testing"
)

func TestZZProf(t *testing.T) {
	p := os.Getenv("ZZ_SCAN")
	if p == "" {
		t.Skip()
	}
	job := DefaultJob()
	job.Uncertainty.Mode = "fast"
	if _, err := Analyze(context.Background(), ScanInput{PanPath: p, Name: "d", Job: job}); err != nil {
		t.Fatal(err)
	}
}
