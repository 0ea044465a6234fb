package main

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"net/http"
	"os"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"wattshelf/api/client"
)

// rssSampler reads a process's resident memory from /proc while the
// load runs, keeping the highest value seen.
type rssSampler struct {
	pid  int
	max  atomic.Int64
	done chan struct{}
}

func newRSSSampler(pid int) *rssSampler { return &rssSampler{pid: pid, done: make(chan struct{})} }

func (s *rssSampler) start() (stop func()) {
	if s.pid <= 0 {
		return func() {}
	}
	stopped := make(chan struct{})
	go func() {
		defer close(s.done)
		tick := time.NewTicker(100 * time.Millisecond)
		defer tick.Stop()
		for {
			if v, err := readVmRSS(s.pid); err == nil && v > s.max.Load() {
				s.max.Store(v)
			}
			select {
			case <-stopped:
				return
			case <-tick.C:
			}
		}
	}()
	return func() {
		close(stopped)
		<-s.done
	}
}

func (s *rssSampler) peak() (int64, string) {
	if s.pid <= 0 || s.max.Load() == 0 {
		return 0, ""
	}
	return s.max.Load(), fmt.Sprintf("peak VmRSS of pid %d, sampled every 100 ms", s.pid)
}

// readVmRSS reads the VmRSS line of /proc/PID/status, in bytes.
func readVmRSS(pid int) (int64, error) {
	f, err := os.Open(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		return 0, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		rest, ok := strings.CutPrefix(sc.Text(), "VmRSS:")
		if !ok {
			continue
		}
		fields := strings.Fields(rest)
		if len(fields) != 2 || fields[1] != "kB" {
			return 0, fmt.Errorf("unexpected VmRSS line %q", sc.Text())
		}
		kb, err := strconv.ParseInt(fields[0], 10, 64)
		return kb * 1024, err
	}
	return 0, fmt.Errorf("no VmRSS in /proc/%d/status", pid)
}

// scrapeRSS reads process_resident_memory_bytes from /metrics when the
// server exposes it: the memory at the end of the run, not the peak.
func scrapeRSS(ctx context.Context, c *loadClient) (int64, string) {
	req, err := client.NewGetMetricsRequest(c.base)
	res, err := c.do(ctx, req, err)
	if err != nil {
		return 0, ""
	}
	defer res.Body.Close()
	body, err := io.ReadAll(res.Body)
	if err != nil || res.StatusCode != http.StatusOK {
		return 0, ""
	}
	for line := range strings.SplitSeq(string(body), "\n") {
		if v, ok := strings.CutPrefix(line, "process_resident_memory_bytes "); ok {
			f, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
			if err == nil {
				return int64(f), "process_resident_memory_bytes from /metrics after the run"
			}
		}
	}
	return 0, ""
}
