// Command whirlfit measures how fast a multirotor motor and propeller follow
// a throttle step, from a sound recording of the rotor.
//
// Run bare, it opens the window on the embedded demo recording. With a
// subcommand it works on the command line:
//
//	whirlfit info FILE...          what a recording holds (format, levels)
//	whirlfit track FILE            rpm over time as CSV
//	whirlfit spectrum FILE         averaged spectrum peaks of an interval
//	whirlfit analyse FILE...       steps, dead time and time constant
//	whirlfit plot FILE             spectrogram or rpm figure
//	whirlfit compare FILE...       propellers side by side
//	whirlfit model FILE            control-loop blocks
//	whirlfit help [COMMAND]        this list, or one command's options
//
// Exit status: 0 on success, 1 when some input could not be analysed, 2 on
// a usage error.
package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"sort"
	"strings"

	"cmdenv.whirlfit.invalid"
)

// command is one subcommand. run parses its own flags from args and writes
// to stdout and stderr only; it returns the exit status.
type command struct {
	name    string
	summary string
	run     func(ctx context.Context, args []string, stdout, stderr io.Writer) int
}

var commands = map[string]command{}

// register adds a subcommand; each command's file calls it from init.
func register(c command) {
	if _, dup := commands[c.name]; dup {
		panic("whirlfit: command registered twice: " + c.name)
	}
	commands[c.name] = c
}

func main() {
	cmdenv.Restore()
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	os.Exit(run(ctx, os.Args[1:], os.Stdout, os.Stderr))
}

// run dispatches to a subcommand, or opens the window when there is none.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		return runWindow(ctx, nil, stderr)
	}
	name := args[0]
	switch name {
	case "help", "-h", "-help", "--help":
		if len(args) > 1 {
			if c, ok := commands[args[1]]; ok {
				return c.run(ctx, []string{"-help"}, stdout, stderr)
			}
			fmt.Fprintf(stderr, "whirlfit: unknown command %q\n", args[1])
			return 2
		}
		usage(stdout)
		return 0
	}
	c, ok := commands[name]
	if !ok {
		fmt.Fprintf(stderr, "whirlfit: unknown command %q (try 'whirlfit help')\n", name)
		return 2
	}
	return c.run(ctx, args[1:], stdout, stderr)
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "whirlfit: motor and propeller step response from a sound recording")
	fmt.Fprintln(w, "\nusage: whirlfit [COMMAND [OPTIONS] FILE...]")
	fmt.Fprintln(w, "\nWith no command the window opens on the demo recording. Commands:")
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-10s %s\n", n, commands[n].summary)
	}
	fmt.Fprintln(w, "\n'whirlfit help COMMAND' or 'whirlfit COMMAND -help' lists a command's options with units and defaults.")
}

// usageFunc returns a flag set's Usage: the synopsis, the description (as
// written, paragraphs separated by blank lines) and every option with its
// unit and default.
func usageFunc(fs *flag.FlagSet, w io.Writer, synopsis, description string) func() {
	return func() {
		fmt.Fprintln(w, "usage:", synopsis)
		fmt.Fprintf(w, "\n%s\n", strings.TrimSpace(description))
		fmt.Fprintln(w, "\nOptions:")
		fs.PrintDefaults()
	}
}
