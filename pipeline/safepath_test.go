package pipeline

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestLocalPath(t *testing.T) {
	tests := []struct {
		in, want string
		err      error
	}{
		{"a/b.stl", "a/b.stl", nil},
		{"./a//b/../c.stl", "a/c.stl", nil},
		{"a/", "a", nil},
		{`a\b.stl`, `a\b.stl`, nil}, // a plain name on Unix; ManifestPath refuses it
		{"", "", ErrPathEmpty},
		{"..", "", ErrPathNotLocal},
		{"../a", "", ErrPathNotLocal},
		{"a/../../b", "", ErrPathNotLocal},
		{"/etc/passwd", "", ErrPathNotLocal},
		{"a\x00b", "", ErrPathNUL},
		{"a\xffb", "", ErrPathNotUTF8},
	}
	for _, tc := range tests {
		got, err := LocalPath(tc.in)
		if got != tc.want || !errors.Is(err, tc.err) {
			t.Errorf("LocalPath(%q) = %q, %v; want %q, %v", tc.in, got, err, tc.want, tc.err)
		}
	}
	if _, err := ManifestPath(`..\a`); !errors.Is(err, ErrPathBackslash) {
		t.Errorf(`ManifestPath("..\\a"): %v, want ErrPathBackslash`, err)
	}
}

func TestResolveInside(t *testing.T) {
	base := t.TempDir()
	writeTree(t, base, map[string]string{"outside/x": "x", "in/a/b.txt": "x", "in/link-in": "->a/b.txt",
		"in/link-out": "->../outside/x", "in/dir-out": "->../outside", "in/loop": "->loop", "in/dangling": "->nope"})
	root := filepath.Join(base, "in")
	tests := []struct {
		rel string
		err error
	}{
		{"a/b.txt", nil},
		{"link-in", nil},
		{"a/../link-in", nil},
		{"link-out", ErrPathOutside},
		{"dir-out/x", ErrPathOutside},
		{"loop", ErrPathUnresolve},
		{"dangling", fs.ErrNotExist},
		{"missing", fs.ErrNotExist},
		{"../outside/x", ErrPathNotLocal},
		{filepath.Join(base, "outside", "x"), ErrPathNotLocal},
		{strings.Repeat("d/", 3000), fs.ErrNotExist},
	}
	for _, tc := range tests {
		got, err := ResolveInside(root, tc.rel)
		if !errors.Is(err, tc.err) {
			t.Errorf("ResolveInside(%.40q) error %v, want %v", tc.rel, err, tc.err)
		}
		if err == nil && got != filepath.Join(root, filepath.FromSlash(tc.rel)) {
			t.Errorf("ResolveInside(%q) = %q", tc.rel, got)
		}
	}
	// The root itself may be reached through a link.
	alias := filepath.Join(base, "alias")
	if err := os.Symlink(root, alias); err != nil {
		t.Fatal(err)
	}
	if _, err := ResolveInside(alias, "link-in"); err != nil {
		t.Errorf("through a linked root: %v", err)
	}
}

func TestEscapeName(t *testing.T) {
	for in, want := range map[string]string{
		"pan.stl":          "pan.stl",
		`a\b.stl`:          `a\b.stl`, // valid UTF-8: unchanged
		"b\xff.stl":        `b\xFF.stl`,
		"\x80\x0a\\x\xc3":  `\x80` + "\n" + `\\x\xC3`,
		"caf\xc3\xa9\xff/": `café\xFF/`,
	} {
		if got := EscapeName(in); got != want {
			t.Errorf("EscapeName(%q) = %q, want %q", in, got, want)
		}
	}
}
