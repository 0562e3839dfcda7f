package main

import (
	"context"
	"errors"
)

func runConvert(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "convert", "--gmu X", "todo")
	fs.Float64("gmu", 0, "string tension")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	return errors.New("not wired yet")
}
