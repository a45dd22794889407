package nightly

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"os/signal"
	"strings"
	"sync"
	"syscall"
)

// Isolation runs every job in a worker process instead of the run's own
// process, so that a job that exhausts its memory or is killed takes down only
// its worker: the file is recorded as failed with the reason, a new worker is
// started for the next file, and the run goes on. Each worker of the pool has
// one worker process, which serves its jobs one after another (a process per
// file would cost a start-up per file). When the run's process dies, its
// workers end with it (on Linux at once, elsewhere when their job ends).
type Isolation struct {
	// Command returns the command that starts a worker process: a process that
	// calls ServeJobs on its standard input and output with the same Job as the
	// run's Options.Job. Its standard error is kept to explain a death.
	Command func() *exec.Cmd
}

// jobRequest and jobReply are the messages between a run and a worker
// process: one line of JSON each.
type jobRequest struct {
	Input Input  `json:"input"`
	Work  string `json:"work"`
}

type jobReply struct {
	Result *JobResult `json:"result,omitempty"`
	Error  string     `json:"error,omitempty"`
	// Errno is the system error behind Error, if any (a full disk, say), so
	// that the run can tell the archive's failures from the input's.
	Errno syscall.Errno `json:"errno,omitempty"`
}

// ServeJobs is the main loop of a worker process (see Isolation): it reads
// one request per line from r, runs job on it and writes the reply as one
// line to w, until r ends. A panicking job is a failure of its file, as in the
// run's own process. SIGINT and SIGTERM are ignored: a Ctrl-C or a service
// stop reaches every process of the group, and the run that started the
// worker stops gracefully by finishing the jobs in progress and then closing
// r.
func ServeJobs(ctx context.Context, r io.Reader, w io.Writer, job Job) error {
	signal.Ignore(os.Interrupt, syscall.SIGTERM)
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), 16<<20)
	enc := json.NewEncoder(w)
	for sc.Scan() {
		var req jobRequest
		if err := json.Unmarshal(sc.Bytes(), &req); err != nil {
			return fmt.Errorf("nightly: worker: bad request: %w", err)
		}
		res, err := callJob(ctx, job, req.Input, req.Work, func(s string) { fmt.Fprintln(os.Stderr, s) })
		if res != nil {
			// JSON carries no NaN or Inf: drop such constants here, as the
			// run would, with the same note.
			var notes []string
			res.Constants, notes = finite(res.Constants)
			res.Notes = append(res.Notes, notes...)
		}
		rep := jobReply{Result: res}
		if err != nil {
			rep = jobReply{Error: err.Error()}
			var errno syscall.Errno
			if errors.As(err, &errno) {
				rep.Errno = errno
			}
		}
		if err := enc.Encode(rep); err != nil {
			if err2 := enc.Encode(jobReply{Error: "nightly: the worker could not send the result: " + err.Error()}); err2 != nil {
				return fmt.Errorf("nightly: worker: %w", err2)
			}
		}
	}
	return sc.Err()
}

// worker is a started worker process.
type worker struct {
	cmd    *exec.Cmd
	in     io.WriteCloser
	out    *bufio.Reader
	pr     *os.File // the read end of out
	stderr *tail
	done   chan struct{} // closed when the process has ended
	err    error         // its exit status (after done)
}

// startWorker starts a worker process.
func startWorker(iso *Isolation) (*worker, error) {
	cmd := iso.Command()
	dieWithParent(cmd)
	w := &worker{cmd: cmd, stderr: &tail{max: 2 << 10}, done: make(chan struct{})}
	cmd.Stderr = w.stderr
	in, err := cmd.StdinPipe()
	if err != nil {
		return nil, err
	}
	// The replies come through a pipe of our own rather than StdoutPipe, which
	// Wait would close under a reader: a reply written just before the
	// process ended is still read.
	pr, pw, err := os.Pipe()
	if err != nil {
		return nil, err
	}
	cmd.Stdout = pw
	err = cmd.Start()
	pw.Close()
	if err != nil {
		pr.Close()
		return nil, fmt.Errorf("nightly: cannot start a worker process: %w", err)
	}
	w.in, w.out, w.pr = in, bufio.NewReaderSize(pr, 64<<10), pr
	go func() {
		w.err = cmd.Wait()
		close(w.done)
	}()
	return w, nil
}

// run sends one job to the worker and waits for its reply. dead is set when
// the process ended during the job; the error then says how.
func (w *worker) run(in Input, work string) (res *JobResult, err error, dead bool) {
	b, _ := json.Marshal(jobRequest{Input: in, Work: work})
	if _, err := w.in.Write(append(b, '\n')); err != nil {
		return nil, w.death(), true
	}
	line, err := w.out.ReadBytes('\n')
	if err != nil {
		return nil, w.death(), true
	}
	var rep jobReply
	if err := json.Unmarshal(line, &rep); err != nil {
		w.stop()
		return nil, fmt.Errorf("nightly: the worker process answered %q: %v", strings.TrimSpace(string(line)), err), true
	}
	if rep.Error != "" {
		if rep.Errno != 0 {
			return nil, fmt.Errorf("%s: %w", rep.Error, rep.Errno), false
		}
		return nil, errors.New(rep.Error), false
	}
	if rep.Result == nil {
		rep.Result = &JobResult{}
	}
	return rep.Result, nil, false
}

// DiedMessage starts the failure message of a file whose job ended its
// process.
const DiedMessage = "the process died while processing this file (out of memory or killed)"

// death waits for the ended process and words how it ended, with the last
// line of what it wrote to stderr ("fatal error: runtime: out of memory").
func (w *worker) death() error {
	w.in.Close()
	<-w.done
	w.pr.Close()
	how := "exit status unknown"
	var ee *exec.ExitError
	if errors.As(w.err, &ee) {
		how = ee.ProcessState.String()
	}
	msg := DiedMessage + ": " + how
	if last := w.stderr.lastLine(); last != "" {
		msg += ": " + last
	}
	return errors.New(msg)
}

// stop ends the worker: its input is closed, so ServeJobs returns.
func (w *worker) stop() {
	w.in.Close()
	<-w.done
	w.pr.Close()
}

// tail keeps the first and the last max bytes written to it (a Go runtime's
// fatal error comes first, then pages of stacks).
type tail struct {
	mu         sync.Mutex
	max        int
	head, last []byte
}

func (t *tail) Write(p []byte) (int, error) {
	t.mu.Lock()
	defer t.mu.Unlock()
	if n := min(len(p), t.max-len(t.head)); n > 0 {
		t.head = append(t.head, p[:n]...)
	}
	t.last = append(t.last, p...)
	if len(t.last) > t.max {
		t.last = append(t.last[:0], t.last[len(t.last)-t.max:]...)
	}
	return len(p), nil
}

// lastLine returns the first line that says what went wrong ("fatal error:
// …", "panic: …"), else the last non-empty line.
func (t *tail) lastLine() string {
	t.mu.Lock()
	defer t.mu.Unlock()
	lines := strings.Split(strings.TrimSpace(string(t.head)+"\n"+string(t.last)), "\n")
	for _, l := range lines {
		if strings.HasPrefix(l, "fatal error:") || strings.HasPrefix(l, "panic:") {
			return strings.TrimSpace(l)
		}
	}
	return strings.TrimSpace(lines[len(lines)-1])
}

// jobRunner runs the jobs of one worker of the pool: in the run's process, or
// in a worker process started on first use and again after a death.
type jobRunner struct {
	r *runner
	w *worker
}

func (j *jobRunner) run(in Input, work string) (*JobResult, error) {
	iso := j.r.o.Isolate
	if iso == nil {
		return j.r.runJob(in, work)
	}
	if j.w == nil {
		w, err := startWorker(iso)
		if err != nil {
			return nil, err
		}
		j.w = w
	}
	res, err, dead := j.w.run(in, work)
	if dead {
		j.w = nil
		j.r.note("nightly: %s: %v", shown(in.Name), err)
	}
	return res, err
}

func (j *jobRunner) close() {
	if j.w != nil {
		j.w.stop()
		j.w = nil
	}
}
