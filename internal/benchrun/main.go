// Command benchrun runs one command several times and prints one row of the
// bench script's table: the median wall time, the median user+sys CPU time
// and the median system part of it, the largest peak resident set size and
// the median count of minor page faults (first touches of fresh memory) of
// the runs (scripts/bench.sh). The system time of an analysis is mostly the
// kernel zeroing the pages it touches first: on the virtual machine of the
// README's table 0.18–0.47 s of 2.0–2.3 s, and the slow runs are the ones
// with the most of it.
//
// Usage:
//
//	go run ./internal/benchrun -n 3 -label NAME -- COMMAND [ARG...]
//
// Exit codes 0 and 1 of the command count as a run (gapflux analyze exits 1
// for a scan out of tolerance); any other code stops benchrun with an error.
package main

import (
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"slices"
	"time"
)

func main() {
	n := flag.Int("n", 3, "number of runs")
	label := flag.String("label", "", "row label")
	header := flag.Bool("header", false, "print the table header and exit")
	flag.Parse()
	if *header {
		fmt.Printf("%-28s %6s %12s %14s %12s %14s %13s %14s\n", "case", "runs", "wall_s(med)", "cpu_s(med)", "sys_s(med)", "peak_rss_mib", "peak_rss_mb", "faults(med)")
		return
	}
	if flag.NArg() == 0 || *n < 1 {
		fmt.Fprintln(os.Stderr, "benchrun: usage: benchrun [-n RUNS] [-label NAME] -- COMMAND [ARG...]")
		os.Exit(2)
	}
	var wall, cpu, sys, faults []float64
	var rssMiB float64
	for range *n {
		r, err := run(flag.Args())
		if err != nil {
			fmt.Fprintf(os.Stderr, "benchrun: %s: %v\n", *label, err)
			os.Exit(1)
		}
		wall, cpu, sys, faults = append(wall, r.wallS), append(cpu, r.cpuS), append(sys, r.sysS), append(faults, r.faults)
		rssMiB = max(rssMiB, r.rssMiB)
	}
	fmt.Printf("%-28s %6d %12.3f %14.3f %12.3f %14.1f %13.1f %14.0f\n", *label, *n, median(wall), median(cpu), median(sys), rssMiB, rssMiB*(1<<20)/1e6, median(faults))
}

// measure is one run's figures: wall, user+sys CPU and system CPU time,
// s; peak resident set size, MiB; minor page faults (0 where the system
// does not tell).
type measure struct {
	wallS, cpuS, sysS, rssMiB, faults float64
}

// run runs the command once and measures it.
func run(args []string) (measure, error) {
	cmd := exec.Command(args[0], args[1:]...)
	cmd.Stdout, cmd.Stderr = os.Stdout, os.Stderr
	t0 := time.Now()
	err := cmd.Run()
	wallS := time.Since(t0).Seconds()
	var ee *exec.ExitError
	if errors.As(err, &ee) && ee.ExitCode() == 1 {
		err = nil
	}
	if err != nil {
		return measure{}, err
	}
	st := cmd.ProcessState
	rss, faults := usage(st)
	return measure{wallS: wallS, cpuS: (st.UserTime() + st.SystemTime()).Seconds(), sysS: st.SystemTime().Seconds(), rssMiB: rss, faults: faults}, nil
}

func median(v []float64) float64 {
	s := slices.Clone(v)
	slices.Sort(s)
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}
