package plan

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"syscall"
	"testing"
)

// Ensure that a small base-case file is copied into each variant, that a
// large one is shared (a hard link on a filesystem without clones) and
// made read-only, so that an attempt to edit it in place fails instead of
// changing the base case and every other variant.
func TestPlanSharesSafely(t *testing.T) {
	dir := study(t, recipeText)
	must(t, os.WriteFile(filepath.Join(dir, "template", "settings.dat"), []byte("relax 0.7\n"), 0o644))
	res, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	small, _ := os.Stat(filepath.Join(dir, "template", "settings.dat"))
	smallV, _ := os.Stat(filepath.Join(Dir(dir, "v002"), "settings.dat"))
	if os.SameFile(small, smallV) {
		t.Error("a small file is shared with the base case; it must be copied")
	}
	if smallV.Mode().Perm() != 0o644 {
		t.Errorf("the small copy has mode %o, want the base case's 0644", smallV.Mode().Perm())
	}
	big := filepath.Join(dir, "template", "mesh", "points.bin")
	bigV := filepath.Join(Dir(dir, "v002"), "mesh", "points.bin")
	a, _ := os.Stat(big)
	b, _ := os.Stat(bigV)
	if res.Cloned > 0 {
		t.Skip("this filesystem clones files; the hard-link path is not taken here")
	}
	if !os.SameFile(a, b) || res.Linked != 6 {
		t.Fatalf("the large file was not hard-linked (%d links reported)", res.Linked)
	}
	if a.Mode().Perm()&0o222 != 0 {
		t.Errorf("the shared large file has mode %o; it must be read-only", a.Mode().Perm())
	}
	// Root ignores permission bits, so the edit is tried as an ordinary
	// user when the test runs as root.
	edit := exec.Command("sh", "-c", "echo corrupt >> "+bigV)
	if os.Getuid() == 0 {
		for d := dir; d != "/" && d != os.TempDir(); d = filepath.Dir(d) {
			os.Chmod(d, 0o755)
		}
		edit.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: 65534, Gid: 65534}}
	}
	out, err := edit.CombinedOutput()
	if err == nil {
		t.Fatalf("an in-place edit of a shared file succeeded: %s", out)
	}
	if !bytes.Contains(out, []byte("ermission denied")) {
		t.Errorf("the edit failed, but not for the permission: %s", out)
	}
	if c, _ := os.ReadFile(big); bytes.Contains(c, []byte("corrupt")) {
		t.Error("the base case was changed")
	}
}

// Ensure that on a filesystem that makes copy-on-write clones (set
// SWEEP_TEST_REFLINK_DIR to a directory on one; CI mounts an XFS image
// with reflink for it), large files are cloned: each variant gets its
// own writable file, and a change to it leaves the base case alone.
func TestPlanClones(t *testing.T) {
	root := os.Getenv("SWEEP_TEST_REFLINK_DIR")
	if root == "" {
		t.Skip("set SWEEP_TEST_REFLINK_DIR to a directory on a filesystem with copy-on-write clones")
	}
	dir, err := os.MkdirTemp(root, "clone-")
	must(t, err)
	defer os.RemoveAll(dir)
	src := study(t, recipeText)
	must(t, os.CopyFS(dir, os.DirFS(src)))
	res, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	if res.Cloned != 6 || res.Linked != 0 {
		t.Fatalf("cloned %d, linked %d; want 6 clones", res.Cloned, res.Linked)
	}
	big := filepath.Join(dir, "template", "mesh", "points.bin")
	bigV := filepath.Join(Dir(dir, "v003"), "mesh", "points.bin")
	a, _ := os.Stat(big)
	b, _ := os.Stat(bigV)
	if os.SameFile(a, b) || b.Mode().Perm()&0o200 == 0 {
		t.Fatalf("the clone is the same file or not writable: %v %v", os.SameFile(a, b), b.Mode())
	}
	f, err := os.OpenFile(bigV, os.O_WRONLY, 0)
	must(t, err)
	f.WriteAt([]byte("changed"), 0)
	f.Close()
	if c, _ := os.ReadFile(big); bytes.HasPrefix(c, []byte("changed")) {
		t.Error("changing a clone changed the base case")
	}
}
