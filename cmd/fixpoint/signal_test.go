package main

import (
	"bytes"
	"io"
	"os"
	"runtime"
	"syscall"
	"testing"
	"time"
)

// A SIGINT or SIGTERM that arrives after a run has returned (its output
// committed) must not kill the process with its default action: that
// gave exit 130, the code of "no output written", with a complete output
// in place. After run the signals are still caught, by finished. Were
// they not, this test would end the test binary by the signal.
func TestSignalAfterRunChangesNothing(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("no SIGINT to self")
	}
	if code := run([]string{"--version"}, bytes.NewReader(nil), io.Discard, io.Discard); code != exitOK {
		t.Fatalf("fixpoint --version: exit %d", code)
	}
	for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
		select {
		case <-finished:
		default:
		}
		if err := syscall.Kill(os.Getpid(), sig); err != nil {
			t.Fatal(err)
		}
		select {
		case got := <-finished:
			if got != sig {
				t.Errorf("caught %v, want %v", got, sig)
			}
		case <-time.After(60 * time.Second):
			t.Fatalf("%v after run was not caught in 60 s", sig)
		}
	}
}
