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
	"strings"

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
	TF        tfCmd        `cmd:"" name:"tf" help:"Transfer function H(s), poles, zeros, f0, Q and the circuit's ODE."`
	Check     checkCmd     `cmd:"" help:"Check a hand-derived ODE or transfer function against the circuit."`
	Drive     driveCmd     `cmd:"" help:"Sinusoidal steady-state output for a given input signal."`
	Step      stepCmd      `cmd:"" help:"Exact step response with rise, overshoot and settling figures."`
	Impulse   impulseCmd   `cmd:"" help:"Exact impulse response."`
	Noise     noiseCmd     `cmd:"" help:"Output and input-referred noise, contributions, integrated noise and SNR."`
	Tolerance toleranceCmd `cmd:"" help:"Monte Carlo, worst case and sensitivities of response metrics."`
	Verify    verifyCmd    `cmd:"" help:"Check the file's require statements at nominal, worst case and as yield."`
	Snap      snapCmd      `cmd:"" help:"Round R and C values to an IEC 60063 E-series and show what moves."`
	Report    reportCmd    `cmd:"" help:"Write a self-contained HTML report (the built-in demo when no FILE)."`
}

// env is what every command may touch: the streams, the context and the
// process's working directory. Commands never use os.Stdout directly, so
// they can be tested.
type env struct {
	ctx    context.Context
	stdin  io.Reader
	stdout io.Writer
	stderr io.Writer
	// stderrIsTerminal enables progress bars.
	stderrIsTerminal bool
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
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	e := &env{ctx: ctx, stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, stderrIsTerminal: isTerminal(os.Stderr)}
	os.Exit(run(e, os.Args[1:]))
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
	kctx, err := parser.Parse(args)
	if err != nil {
		fmt.Fprintf(e.stderr, "nodal: %v\n", err)
		return exitInput
	}
	if err := kctx.Run(e); err != nil {
		var v *verdictError
		if errors.As(err, &v) {
			return exitVerdict
		}
		if errors.Is(err, errInterrupted) {
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
