package main

import (
	"github.com/sirupsen/logrus"

	"tautline/cmd/tautline/internal/cli"
)

// version is the release this source tree describes; cli.Version appends
// the VCS revision when the binary was built from a git checkout.
const version = "0.1.0"

func versionString() string { return cli.Version(version) }

func newProgress(e *env, lg *logrus.Logger, total int) *cli.Progress {
	return cli.NewProgress(e.stderr, e.isTerminal, lg, total)
}

// stderrLog returns a printf-style logger to stderr for commands without
// --log-level (simulate, spectrum): it reports long steps such as building
// a string-spectrum table.
func stderrLog(e *env) func(string, ...any) {
	lg, _ := cli.NewLogger(e.stderr, "info", "text")
	return lg.Infof
}
