package cli

import (
	"fmt"
	"net"
	"os"
	"os/signal"
	"strconv"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/whatif"
	"wearplan/scenarios"
)

func newServeCmd() *cobra.Command {
	var addr string
	var port int
	var timeout time.Duration
	cmd := &cobra.Command{
		Use:   "serve FILE [FILE...]",
		Short: "Open a what-if page: change the budget and targets, see the plan again",
		Long: `Serve starts a small web server on this computer and prints the address of
a page for budget meetings. On the page you change the yearly budget (one
level, and changes by year such as "cut 15% from 2029"), the cost escalation,
the targets and the objective; after every change the scenario is planned
again and the page redraws the condition and spend charts, the level-of-
service table and, in plain words, any shortfall with the money that would
close it. "Keep this alternative" adds the plan to a side-by-side list; any
alternative can be saved as a scenario file (it loads with wearplan check
and plans the same), as the HTML report or as a workbook.

Changes are checked exactly like the same keys in a scenario file. The server
reads the files given when it starts and nothing else, answers only on
127.0.0.1 unless --addr says otherwise, and stops on Ctrl-C. Several files
make a choice of scenarios on the page.`,
		Example: `  # The demo; open the address printed
  wearplan serve scenarios/examples/marrowby.yaml

  # Two scenarios, another port, a longer time limit per plan
  wearplan serve scenarios/examples/marrowby.yaml scenarios/examples/marrowby-reduced.yaml --port 8400 --timeout 2m`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if port < 0 || port > 65535 {
				return usageError("--port %d: give a port from 1 to 65535 (0 picks a free one)", port)
			}
			if timeout <= 0 {
				return usageError("--timeout %s: give a positive duration such as 30s", timeout)
			}
			var sources []whatif.Source
			for _, path := range args {
				// The scenario's own folder is all the server can read.
				ed, err := scenarios.LoadEditableFile(path)
				if err != nil {
					return err
				}
				sources = append(sources, whatif.Source{Path: path, Scenario: ed})
			}
			opt := whatif.Options{Plan: scenarios.Options{Timeout: timeout}, Version: Version, Log: cmd.ErrOrStderr()}
			ip := net.ParseIP(addr)
			loopback := addr == "localhost" || ip != nil && ip.IsLoopback()
			if ip == nil && addr != "localhost" {
				opt.Hosts = append(opt.Hosts, addr)
			}
			srv, err := whatif.New(sources, opt)
			if err != nil {
				return err
			}
			ln, err := net.Listen("tcp", net.JoinHostPort(addr, strconv.Itoa(port)))
			if err != nil {
				return &exitError{code: exitFailure, err: fmt.Errorf("cannot listen on %s port %d: %w; choose another with --port (0 picks a free one)", addr, port, err)}
			}
			if !loopback {
				fmt.Fprintf(cmd.ErrOrStderr(), "warning: listening on %s, not only on this computer: anyone who can reach it on port %d can use the page and read the scenarios, and there is no password\n", addr, ln.Addr().(*net.TCPAddr).Port)
			}
			host := addr
			if ip != nil && ip.IsUnspecified() {
				host = "127.0.0.1"
			}
			url := "http://" + net.JoinHostPort(host, strconv.Itoa(ln.Addr().(*net.TCPAddr).Port)) + "/"
			fmt.Fprintf(cmd.OutOrStdout(), "wearplan what-if page for %d scenario(s): %s\nPress Ctrl-C to stop.\n", len(sources), url)
			flushOutput(cmd)
			// The server stops on Ctrl-C itself; it writes no files.
			outputsOf(cmd).unwatch()
			ctx, stop := signal.NotifyContext(cmd.Context(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			if err := srv.Serve(ctx, ln); err != nil {
				return &exitError{code: exitFailure, err: err}
			}
			fmt.Fprintln(cmd.OutOrStdout(), "stopped")
			return nil
		},
	}
	cmd.Flags().StringVar(&addr, "addr", "127.0.0.1", "address to listen on; anything but 127.0.0.1, ::1 or localhost lets other computers use the page")
	cmd.Flags().IntVar(&port, "port", 8321, "port to listen on; 0 picks a free one")
	cmd.Flags().DurationVar(&timeout, "timeout", 30*time.Second, "give up on a plan after this long (e.g. 30s, 2m)")
	return cmd
}
