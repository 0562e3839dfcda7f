package main

import (
	"flag"
	"maps"

	"tautline/cmd/tautline/internal/cli"
	"tautline/models/registry"
	"tautline/runconfig"
)

// runFlags are the options shared by the commands that sample (fit,
// compare): one flag for every configuration key, plus the file and
// logging options.
type runFlags struct {
	configPath  string
	printConfig bool
	priors      cli.Multi
	logLevel    string
	logFormat   string
}

// bindCommon registers the options that are not configuration keys.
func bindCommon(fs *flag.FlagSet, rf *runFlags) {
	fs.StringVar(&rf.configPath, "config", "", "YAML configuration file; flags override its keys")
	fs.BoolVar(&rf.printConfig, "print-config", false, "print the resolved configuration as YAML and exit")
	fs.Var(&rf.priors, "prior", "prior of one parameter, NAME=SPEC, e.g. log10_A='uniform(-18,-11)'; repeatable; shapes: uniform(lo,hi), log-uniform(lo,hi), normal(mu,sd), truncnormal(mu,sd,lo,hi), fixed(v)")
	fs.StringVar(&rf.logLevel, "log-level", "info", "log level: debug, info, warn or error")
	fs.StringVar(&rf.logFormat, "log-format", "text", "log format: text or json")
}

// resolveConfig parses args twice: first to find --config (and to serve
// --help with the built-in defaults), then over the file's values so that
// flags override the file.
func resolveConfig(e *env, name, synopsis, description string, args []string, defaults func() runconfig.Config,
	bind func(*flag.FlagSet, *runconfig.Config), extra func(*flag.FlagSet)) (runconfig.Config, *runFlags, *flag.FlagSet, error) {
	def := defaults()
	var rf runFlags
	fs := newFlagSet(e, name, synopsis, description)
	bind(fs, &def)
	bindCommon(fs, &rf)
	if extra != nil {
		extra(fs)
	}
	if err := cli.Parse(fs, args); err != nil {
		return runconfig.Config{}, nil, nil, err
	}
	cfg := defaults()
	if rf.configPath != "" {
		if err := runconfig.Load(rf.configPath, &cfg); err != nil {
			return runconfig.Config{}, nil, nil, err
		}
	}
	var rf2 runFlags
	fs2 := flag.NewFlagSet(name, flag.ContinueOnError)
	fs2.SetOutput(e.stderr)
	bind(fs2, &cfg)
	bindCommon(fs2, &rf2)
	if extra != nil {
		extra(fs2)
	}
	if err := cli.Parse(fs2, args); err != nil {
		return runconfig.Config{}, nil, nil, err
	}
	given, err := priorSpecs(rf2.priors, "--prior", "log10_A=uniform(-18,-11)")
	if err != nil {
		return runconfig.Config{}, nil, nil, err
	}
	if len(given) > 0 && cfg.Model.Priors == nil {
		cfg.Model.Priors = map[string]string{}
	}
	maps.Copy(cfg.Model.Priors, given)
	if len(cfg.Data) == 0 || (len(cfg.Data) == 1 && cfg.Data[0] == "") {
		cfg.Data = runconfig.DataList{registry.DefaultData(cfg.Model.Name)}
	}
	return cfg, &rf2, fs2, nil
}
