// Command nodal analyses linear analog circuits described in nodal's own
// component-list language: frequency response, exact transfer function,
// poles and zeros, the circuit's differential equation, sinusoidal steady
// state, step and impulse response, tolerance spreads and requirement
// verdicts.
//
// Exit status: 0 success, 1 a verdict failed (a check differs, a
// requirement fails), 2 bad input or usage.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"nodal/netlist"
	"os"
	"os/signal"
	"runtime/debug"
	"strings"
	"syscall"
	"time"

	"github.com/alecthomas/kong"
)

// version is the program version, printed by --version and in report footers.
const version = "0.1.0"

// Exit statuses.
const (
	exitOK      = 0
	exitVerdict = 1
	exitInput   = 2
)

// cli is the command tree.
type cli struct {
	Version kong.VersionFlag `help:"Print the version and exit."`

	Parts     partsCmd     `cmd:"" help:"Show the elaborated parts and nodes of a circuit."`
	Equations equationsCmd `cmd:"" help:"Show the MNA equations (G + sC)x = b being solved."`
	Sweep     sweepCmd     `cmd:"" help:"Frequency response: magnitude, phase and group delay."`
	Transfer  transferCmd  `cmd:"" help:"Transfer function H(s), poles, zeros, f0, Q and the circuit's ODE."`
	Impedance impedanceCmd `cmd:"" help:"Impedance Z(s) at a source's port or a node, over frequency, with its resonances."`
	Loop      loopCmd      `cmd:"" help:"Loop gain T(s) around one gain element, with crossovers and phase and gain margins."`
	Check     checkCmd     `cmd:"" help:"Check a hand-derived ODE or transfer function against the circuit."`
	Drive     driveCmd     `cmd:"" help:"Sinusoidal steady-state output for a given input signal."`
	Time      timeCmd      `cmd:"" help:"Exact step or impulse response with rise, overshoot and settling figures."`
	Noise     noiseCmd     `cmd:"" help:"Output and input-referred noise, contributions, integrated noise and SNR."`
	Tolerance toleranceCmd `cmd:"" help:"Monte Carlo, worst case and sensitivities of response metrics."`
	Verify    verifyCmd    `cmd:"" help:"Check the file's require statements at nominal, worst case and as yield."`
	Compare   compareCmd   `cmd:"" help:"Compare a response with another circuit's or a measurement (CSV): differences in dB and degrees."`
	Snap      snapCmd      `cmd:"" help:"Round R and C values to an IEC 60063 E-series and show what moves."`
	Report    reportCmd    `cmd:"" help:"Write a self-contained HTML report (the built-in demo when no FILE)."`
	Tune      tuneCmd      `cmd:"" help:"Serve a local page of sliders for the file's values, with its responses and verdicts following them."`
}

// env is what every command may touch: the streams, the context and the
// process's working directory. Commands never use os.Stdout directly, so
// they can be tested.
type env struct {
	ctx context.Context
	// temps lists temporary output files for removal on a forced exit
	// (nil: none kept).
	temps  *tempFiles
	stdin  io.Reader
	stdout io.Writer
	stderr io.Writer
	// stderrIsTerminal enables progress bars.
	stderrIsTerminal bool
	// args are the command-line arguments after the program name, as
	// given (the report's header shows them).
	args []string
	// plotData, when set, receives the data a command would plot instead
	// of the command drawing it: runVaried draws every value's data in
	// one figure.
	plotData func(any)
}

// verdictError marks a failed verdict: exit status 1, not 2.
type verdictError struct{ msg string }

func (e *verdictError) Error() string { return e.msg }

// errInterrupted marks a run stopped by Ctrl-C after it printed what it had
// finished: exit status 2 with no further message.
var errInterrupted = errors.New("interrupted")

// exitRequest carries kong's requested exit (after --help or --version).
type exitRequest int

func main() {
	if os.Getenv("GOMEMLIMIT") == "" {
		// The memory budget of a run (netlist.MaxParts is sized for it):
		// the collector works harder near it instead of letting the heap
		// double past it.
		debug.SetMemoryLimit(memoryBudgetBytes)
	}
	temps := &tempFiles{}
	ctx, stop := interruptContext(temps)
	defer stop()
	e := &env{ctx: ctx, temps: temps, stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, stderrIsTerminal: isTerminal(os.Stderr)}
	os.Exit(run(e, os.Args[1:]))
}

// memoryBudgetBytes is the soft memory limit of a run (1 GiB).
const memoryBudgetBytes = 1 << 30

// interruptGrace is how long a command may take to stop after the first
// signal: long work that watches its context stops at once, and a command
// that reports partial results (tolerance) writes them within it; work that
// cannot be stopped (a numeric transfer-function extraction of a huge
// circuit) is ended when it runs out.
const interruptGrace = 900 * time.Millisecond

// interruptContext returns a context cancelled by the first SIGINT (Ctrl-C),
// SIGTERM or SIGHUP: long work stops, a half-written output file is
// removed, and the command exits with status 2 after printing what it had
// finished where that is meaningful. A second signal, or interruptGrace
// passing, exits with status 2 after removing the temporary output files
// listed in temps, so every command stops within a second.
func interruptContext(temps *tempFiles) (context.Context, func()) {
	ctx, cancel := context.WithCancel(context.Background())
	sig := make(chan os.Signal, 2)
	signal.Notify(sig, os.Interrupt, syscall.SIGTERM, syscall.SIGHUP)
	go func() {
		<-sig
		cancel()
		select {
		case <-sig:
		case <-time.After(interruptGrace):
			fmt.Fprintln(os.Stderr, "nodal: interrupted")
		}
		temps.removeAll()
		os.Exit(exitInput)
	}()
	return ctx, func() {
		signal.Stop(sig)
		cancel()
	}
}

// run parses args, runs the command and returns the exit status. It never
// panics on bad input.
func run(e *env, args []string) (code int) {
	defer func() {
		if r := recover(); r != nil {
			if req, ok := r.(exitRequest); ok {
				code = int(req)
				return
			}
			fmt.Fprintf(e.stderr, "nodal: internal error: %v\n", r)
			code = exitInput
		}
	}()
	e.args = args
	var c cli
	parser, err := kong.New(&c,
		kong.Name("nodal"),
		kong.Description("Small-signal analysis of linear analog circuits: exact H(s), poles and zeros, ODE, responses and tolerances."),
		helpVars(),
		kong.Writers(e.stdout, e.stderr),
		kong.Exit(func(code int) { panic(exitRequest(code)) }),
		kong.ConfigureHelp(kong.HelpOptions{Compact: true}),
		kong.UsageOnError(),
	)
	if err != nil {
		fmt.Fprintf(e.stderr, "nodal: %v\n", err)
		return exitInput
	}
	if len(args) == 0 {
		// Bare nodal: the usage, on standard error as for any usage
		// error, and exit status 2.
		parser.Stdout = e.stderr
		kctx, err := kong.Trace(parser, nil)
		if err == nil {
			err = kctx.PrintUsage(false)
		}
		if err != nil {
			fmt.Fprintf(e.stderr, "nodal: %v\n", err)
		}
		return exitInput
	}
	if err := unknownCommand(parser, args); err != nil {
		fmt.Fprintf(e.stderr, "nodal: %v\n", err)
		return exitInput
	}
	kctx, err := parser.Parse(joinExpressionValues(parser, args))
	if err != nil {
		fmt.Fprintf(e.stderr, "nodal: %v\n", err)
		return exitInput
	}
	if err := kctx.Run(e); err != nil {
		var v *verdictError
		if errors.As(err, &v) {
			return exitVerdict
		}
		if errors.Is(err, errInterrupted) && !errors.Is(err, errOutputInterrupted) {
			return exitInput // the command said what it finished
		}
		if errors.Is(err, errOutputInterrupted) || e.ctx.Err() != nil && (errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded)) {
			fmt.Fprintln(e.stderr, "nodal: interrupted: no output file was written; output to the terminal may be cut short")
			return exitInput
		}
		fmt.Fprintf(e.stderr, "nodal: %v\n", err)
		return exitInput
	}
	return exitOK
}

// isTerminal reports whether f is a character device (a terminal).
func isTerminal(f *os.File) bool {
	st, err := f.Stat()
	if err != nil {
		return false
	}
	return st.Mode()&os.ModeCharDevice != 0
}

// helpVars are the variables of the help texts: the version and the
// metric list, read from the metric registry.
func helpVars() kong.Vars {
	return kong.Vars{"version": "nodal " + version, "metrics": strings.Join(netlist.MetricNames(), ", ")}
}

// unknownCommand names a first argument that is no command, with the
// nearest command as a hint (or the one command and flag it is a value
// of), or returns nil.
func unknownCommand(parser *kong.Kong, args []string) error {
	if len(args) == 0 || strings.HasPrefix(args[0], "-") {
		return nil
	}
	var names []string
	for _, n := range parser.Model.Children {
		if n.Name == args[0] {
			return nil
		}
		names = append(names, n.Name)
	}
	list := strings.Join(names, ", ")
	var uses [][2]string // command and flag of which the word is a value
	for _, n := range parser.Model.Children {
		for _, f := range n.Flags {
			if f.Enum != "" && f.EnumMap()[args[0]] {
				uses = append(uses, [2]string{n.Name, f.Name})
			}
		}
	}
	if len(uses) == 1 {
		u := uses[0]
		return fmt.Errorf("unknown command %q; it is a value of %q: nodal %s FILE --%s %s (commands: %s)", args[0], u[0]+" --"+u[1], u[0], u[1], args[0], list)
	}
	return fmt.Errorf("unknown command %q; the nearest is %q (commands: %s)", args[0], netlist.Nearest(args[0], names), list)
}

// joinExpressionValues writes "--tf" "-1/(1 + s)" as "--tf=-1/(1 + s)" for
// every flag tagged expression:"" (a hand derivation, a drive signal),
// whose value may begin with "-": kong would read such a value as a
// flag. The argument after such a flag is its value when it begins with
// one "-" (a value cannot begin with "--"); "--" ends the flags as usual.
func joinExpressionValues(parser *kong.Kong, args []string) []string {
	names := map[string]bool{}
	for _, n := range parser.Model.Children {
		for _, group := range n.AllFlags(false) {
			for _, f := range group {
				if f.Tag.Has("expression") {
					names["--"+f.Name] = true
				}
			}
		}
	}
	out := make([]string, 0, len(args))
	for i := 0; i < len(args); i++ {
		if args[i] == "--" {
			return append(out, args[i:]...)
		}
		if names[args[i]] && i+1 < len(args) && strings.HasPrefix(args[i+1], "-") && !strings.HasPrefix(args[i+1], "--") {
			out = append(out, args[i]+"="+args[i+1])
			i++
			continue
		}
		out = append(out, args[i])
	}
	return out
}
