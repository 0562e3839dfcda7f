package cli

import (
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/sirupsen/logrus"
)

// NewLogger returns a logrus logger writing to w at the given level and
// format ("text" or "json").
func NewLogger(w io.Writer, level, format string) (*logrus.Logger, error) {
	lg := logrus.New()
	lg.SetOutput(w)
	lv, err := logrus.ParseLevel(level)
	if err != nil {
		return nil, fmt.Errorf("%w: --log-level %q: want debug, info, warn or error", ErrUsage, level)
	}
	lg.SetLevel(lv)
	switch format {
	case "text":
		lg.SetFormatter(&logrus.TextFormatter{DisableColors: true, FullTimestamp: true, TimestampFormat: time.TimeOnly})
	case "json":
		lg.SetFormatter(&logrus.JSONFormatter{})
	default:
		return nil, fmt.Errorf("%w: --log-format %q: want text or json", ErrUsage, format)
	}
	return lg, nil
}

// Progress reports a long loop: on a terminal a one-line bar redrawn in
// place, elsewhere a log line every interval.
type Progress struct {
	w        io.Writer
	tty      bool
	log      *logrus.Logger
	total    int
	start    time.Time
	last     time.Time
	interval time.Duration
	drawn    bool
}

// NewProgress reports total steps to w: a bar when tty is set, lines of lg
// every 10 s otherwise.
func NewProgress(w io.Writer, tty bool, lg *logrus.Logger, total int) *Progress {
	now := time.Now()
	return &Progress{w: w, tty: tty, log: lg, total: total, start: now, last: now, interval: 10 * time.Second}
}

// Update shows done out of total steps; extra is appended (tau, ESS, ...).
// eta, if positive, overrides the estimate from the step rate.
func (p *Progress) Update(done int, extra string, eta time.Duration) {
	now := time.Now()
	if p.tty && now.Sub(p.last) < 200*time.Millisecond && done < p.total {
		return
	}
	if !p.tty && now.Sub(p.last) < p.interval && done < p.total {
		return
	}
	p.last = now
	el := now.Sub(p.start).Seconds()
	rate := float64(done) / el
	if eta <= 0 && rate > 0 && p.total > done {
		eta = time.Duration(float64(p.total-done)/rate) * time.Second
	}
	if p.tty {
		const width = 24
		frac := float64(done) / float64(max(p.total, 1))
		n := min(int(frac*width), width)
		bar := strings.Repeat("=", n) + strings.Repeat(" ", width-n)
		fmt.Fprintf(p.w, "\r[%s] %d/%d steps  %.0f/s  ETA %s  %s\x1b[K", bar, done, p.total, rate, fmtDur(eta), extra)
		p.drawn = true
		return
	}
	p.log.WithFields(logrus.Fields{"step": done, "of": p.total, "rate_per_s": fmt.Sprintf("%.0f", rate), "eta": fmtDur(eta)}).Info(strings.TrimSpace("sampling " + extra))
}

// Finish ends the bar's line.
func (p *Progress) Finish() {
	if p.tty && p.drawn {
		fmt.Fprintln(p.w)
	}
}

func fmtDur(d time.Duration) string {
	if d <= 0 {
		return "-"
	}
	return d.Round(time.Second).String()
}
