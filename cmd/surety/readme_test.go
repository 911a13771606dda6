package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// readmeCommand is one command line of a shell block of README.md.
type readmeCommand struct {
	line int // 1-based line in README.md
	text string
	// needs names the program a marker says the block needs; the block is
	// skipped where it is not on PATH.
	needs string
	skip  string // the reason a marker gives for skipping the block
}

// readmeMarker is the HTML comment, invisible on the rendered page, that
// may stand on the line right before a block's opening fence:
// "<!-- readme-test: skip (why) -->" or "<!-- readme-test: needs PROGRAM -->".
var readmeMarker = regexp.MustCompile(`^<!-- readme-test: (skip \((.+)\)|needs (\S+)) -->$`)

// readmeCommands returns the command lines of the ```sh and ```console
// blocks of the markdown file at path (a console block's commands are its
// lines after "$ "), in order, with the marker of their block.
func readmeCommands(path string) ([]readmeCommand, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var cmds []readmeCommand
	var inBlock, run, console bool
	var needs, skip, prev string
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		line := sc.Text()
		switch {
		case strings.HasPrefix(line, "```") && !inBlock:
			inBlock = true
			info := strings.TrimSpace(strings.TrimPrefix(line, "```"))
			run, console = info == "sh" || info == "console", info == "console"
			needs, skip = "", ""
			if m := readmeMarker.FindStringSubmatch(prev); m != nil {
				skip, needs = m[2], m[3]
			} else if strings.HasPrefix(prev, "<!-- readme-test") {
				return nil, fmt.Errorf("%s:%d: a marker reads <!-- readme-test: skip (why) --> or <!-- readme-test: needs PROGRAM -->, not %q", path, n-1, prev)
			}
		case strings.HasPrefix(line, "```"):
			inBlock = false
		case inBlock && run:
			text := strings.TrimSpace(line)
			if console {
				var ok bool
				if text, ok = strings.CutPrefix(text, "$ "); !ok {
					break // output
				}
			}
			if text != "" && !strings.HasPrefix(text, "#") {
				cmds = append(cmds, readmeCommand{line: n, text: text, needs: needs, skip: skip})
			}
		}
		prev = line
	}
	return cmds, sc.Err()
}

// TestReadmeCommands runs every command of README.md's shell blocks, in
// order, in a copy of the repository's files (as a fresh clone has them),
// with `surety` on PATH and `go run ./cmd/surety` standing for it, and
// fails at the first that exits non-zero, naming its README line. So the
// README cannot drift from the tool (issue 13, item 7: its sweep
// walkthrough failed on a fresh clone). `go test` lines are not run (the
// suite would run itself); `go install ./cmd/surety` is the binary the
// test built. DEVELOPERS.md, "The README's commands", has the rules.
func TestReadmeCommands(t *testing.T) {
	cmds, err := readmeCommands("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	if len(cmds) == 0 {
		t.Fatal("no command in README.md's shell blocks")
	}
	bin := suretyBinary(t)
	work, tmp := t.TempDir(), t.TempDir()
	if err := copyRepo("../..", work); err != nil {
		t.Fatal(err)
	}
	path := filepath.Dir(bin) + string(os.PathListSeparator) + os.Getenv("PATH")
	ran := 0
	demos := map[string]bool{}
	for _, c := range cmds {
		switch {
		case c.skip != "":
			t.Logf("README.md:%d: skipped (%s): %s", c.line, c.skip, c.text)
			continue
		case c.needs != "":
			if _, err := exec.LookPath(c.needs); err != nil {
				t.Logf("README.md:%d: skipped, %s is not on PATH: %s", c.line, c.needs, c.text)
				continue
			}
		case strings.HasPrefix(c.text, "go test"), strings.HasPrefix(c.text, "go install ./cmd/surety"):
			continue
		}
		text := c.text
		if rest, ok := strings.CutPrefix(text, "go run ./cmd/surety"); ok {
			text = "surety" + rest
		}
		// A demo writes the same bytes for the same flags (its seed is
		// one of them): a later section repeating one, for a reader who
		// starts there, need not be run again.
		if strings.HasPrefix(text, "surety demo ") {
			flags, _, _ := strings.Cut(text, "#")
			flags = strings.Join(strings.Fields(flags), " ")
			if demos[flags] {
				continue
			}
			demos[flags] = true
		}
		ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
		cmd := exec.CommandContext(ctx, "sh", "-c", text)
		cmd.Dir = work
		// TMPDIR: a demo without --out writes to a new temporary folder.
		cmd.Env = append(os.Environ(), "PATH="+path, "TMPDIR="+tmp)
		start := time.Now()
		out, err := cmd.CombinedOutput()
		cancel()
		if testing.Verbose() {
			t.Logf("README.md:%d: %.1f s: %s", c.line, time.Since(start).Seconds(), c.text)
		}
		if err != nil {
			t.Fatalf("README.md:%d: %s: %v\n%s", c.line, c.text, err, tail(out, 2000))
		}
		ran++
	}
	t.Logf("%d commands of README.md ran", ran)
}

// tail is the last n bytes of b, where an error message is.
func tail(b []byte, n int) string {
	if len(b) > n {
		b = b[len(b)-n:]
	}
	return string(b)
}

// copyRepo copies the repository's files from src to dst as a fresh
// clone has them: the files git tracks, so that a demo/ folder left in the
// working copy by an earlier run cannot hide a walkthrough that fails
// without it. Without git, every file but the git folder and installed
// node modules.
func copyRepo(src, dst string) error {
	var files []string
	if out, err := exec.Command("git", "-C", src, "ls-files", "-z").Output(); err == nil {
		for _, f := range strings.Split(string(out), "\x00") {
			if f != "" {
				files = append(files, filepath.FromSlash(f))
			}
		}
	} else {
		err := filepath.WalkDir(src, func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if d.IsDir() && (d.Name() == ".git" || d.Name() == "node_modules") {
				return filepath.SkipDir
			}
			if d.Type().IsRegular() && d.Name() != ".git" { // a worktree's .git is a file
				rel, err := filepath.Rel(src, p)
				files = append(files, rel)
				return err
			}
			return nil
		})
		if err != nil {
			return err
		}
	}
	for _, f := range files {
		b, err := os.ReadFile(filepath.Join(src, f))
		if errors.Is(err, fs.ErrNotExist) {
			continue // deleted in the working copy, not yet in git
		}
		if err != nil {
			return err
		}
		if err := os.MkdirAll(filepath.Join(dst, filepath.Dir(f)), 0o755); err != nil {
			return err
		}
		if err := os.WriteFile(filepath.Join(dst, f), b, 0o644); err != nil {
			return err
		}
	}
	return nil
}
