package main

import (
	"errors"

	"tautline/models"
)

func buildStrings(cfg Config, logf func(string, ...any)) (models.Model, error) {
	return nil, errors.New("strings model: not wired yet")
}
