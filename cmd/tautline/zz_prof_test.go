package main

import (
	"os"
	"runtime/pprof"
	"testing"
)

func TestZZProf(t *testing.T) {
	args := os.Getenv("ZZARGS")
	if args == "" {
		t.Skip()
	}
	f, _ := os.Create("/tmp/zz.prof")
	pprof.StartCPUProfile(f)
	code, _, errs := runCLI(t, splitArgs(args)...)
	pprof.StopCPUProfile()
	if code != 0 {
		t.Fatal(errs)
	}
}

func splitArgs(s string) []string {
	var out []string
	cur := ""
	for _, c := range s {
		if c == ' ' {
			if cur != "" {
				out = append(out, cur)
			}
			cur = ""
			continue
		}
		cur += string(c)
	}
	if cur != "" {
		out = append(out, cur)
	}
	return out
}
