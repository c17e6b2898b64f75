package pipeline

import (
	"errors"
	"testing"
)

// TestBoth checks that both runs its two functions, returns each one's
// error in its place, and raises a panic of the second in the caller.
func TestBoth(t *testing.T) {
	e1, e2 := errors.New("a"), errors.New("b")
	for _, tt := range []struct {
		name       string
		errA, errB error
	}{{"none", nil, nil}, {"first", e1, nil}, {"second", nil, e2}, {"both", e1, e2}} {
		ranA, ranB := false, false
		gotA, gotB := both(func() error { ranA = true; return tt.errA }, func() error { ranB = true; return tt.errB })
		if !ranA || !ranB || gotA != tt.errA || gotB != tt.errB {
			t.Errorf("%s: ran %v %v, errors %v %v; want %v %v", tt.name, ranA, ranB, gotA, gotB, tt.errA, tt.errB)
		}
	}
	defer func() {
		if p := recover(); p != "boom" {
			t.Errorf("recovered %v, want the second function's panic", p)
		}
	}()
	both(func() error { return nil }, func() error { panic("boom") })
	t.Error("both returned after a panic")
}
