package main

import (
	"fmt"
	"io"
	"sync"
	"time"

	"undercurrent/ingest"
	"undercurrent/report"
)

// A stageLine shows on a terminal what a long command is doing while no
// progress bar does: one line of stderr, redrawn a few times a second, with
// the stage, the rows read so far while a log is read, and the seconds
// elapsed. On anything but a terminal (a pipe, a file) there is none.
type stageLine struct {
	w     io.Writer
	start time.Time
	mu    sync.Mutex
	stage string
	rows  int64
	drawn bool
	stop  chan struct{}
	done  chan struct{}
	once  sync.Once
}

// stageLineDelay is how long a command runs before its stage line first
// appears (a quick run shows none), and stageLineEvery how often it is
// redrawn.
var stageLineDelay, stageLineEvery = 500 * time.Millisecond, 200 * time.Millisecond

// newStageLine starts a stage line on stderr when it is a terminal; it
// returns nil otherwise, and every method of a nil stageLine does nothing.
func newStageLine(stderr io.Writer, stage string) *stageLine {
	w := progressOn(stderr)
	if w == nil {
		return nil
	}
	s := &stageLine{w: w, start: time.Now(), stage: stage, stop: make(chan struct{}), done: make(chan struct{})}
	if stageLineDelay <= 0 {
		// Drawn at once, before the command moves on: drawn only by the
		// loop, the first stage could be renamed before the goroutine ran,
		// and never shown (TestStageLineOnTerminal failed so on a busy
		// machine, the terminal showing "writing" without "simulating").
		s.draw()
	}
	go s.loop()
	return s
}

func (s *stageLine) loop() {
	defer close(s.done)
	if stageLineDelay > 0 {
		select {
		case <-s.stop:
			return
		case <-time.After(stageLineDelay):
		}
	}
	t := time.NewTicker(stageLineEvery)
	defer t.Stop()
	for {
		s.draw()
		select {
		case <-s.stop:
			return
		case <-t.C:
		}
	}
}

func (s *stageLine) draw() {
	s.mu.Lock()
	defer s.mu.Unlock()
	text := s.stage
	if s.rows > 0 {
		text += fmt.Sprintf(": %d rows read", s.rows)
	}
	fmt.Fprintf(s.w, "\r%s (%.0f s)\x1b[K", text, time.Since(s.start).Seconds())
	s.drawn = true
}

// set names the stage now under way.
func (s *stageLine) set(stage string) {
	if s == nil {
		return
	}
	s.mu.Lock()
	s.stage, s.rows = stage, 0
	s.mu.Unlock()
}

// readOption is an ingest option that shows the rows read on the line.
func (s *stageLine) readOption() ingest.Option {
	if s == nil {
		return ingest.WithProgress(nil)
	}
	return ingest.WithProgress(func(rows int64) {
		s.mu.Lock()
		s.rows = rows
		s.mu.Unlock()
	})
}

// clear stops the line and erases it; the terminal is then free for
// other output.
func (s *stageLine) clear() {
	if s == nil {
		return
	}
	s.once.Do(func() {
		close(s.stop)
		<-s.done
		s.mu.Lock()
		defer s.mu.Unlock()
		if s.drawn {
			fmt.Fprint(s.w, "\r\x1b[K")
		}
	})
}

// handOff returns w (a progress bar's writer, nil for none) such that the
// line is cleared as the bar first draws: the bar takes the line over.
func (s *stageLine) handOff(w io.Writer) io.Writer {
	if s == nil || w == nil {
		return w
	}
	return &handOffWriter{line: s, w: w}
}

type handOffWriter struct {
	line *stageLine
	w    io.Writer
}

func (h *handOffWriter) Write(p []byte) (int, error) {
	h.line.clear()
	return h.w.Write(p)
}

// objectLine shows on a terminal the stages of report.Build's search for
// magnetised objects (report.ProgressFunc), which follows the fitting's
// bar and on a survey with many objects takes longer than the fitting:
// before, the terminal showed nothing for most of such a run (rv14c: 58 s
// of 88 s on 600 traverses with a drum every 6 m). The line shows the
// stage and its count ("searching for magnetised objects: 12 of 200
// groups (9 s)"); it takes over from first, the command's stage line, if
// that is still drawn. Where first is nil (not a terminal) it is nil too,
// and its progress is nil: nothing is shown, nothing counted.
type objectLine struct {
	stderr io.Writer
	first  *stageLine
	mu     sync.Mutex
	line   *stageLine
	done   bool // cleared: later calls (Build not yet stopped after an interrupt) show nothing
}

func objectStages(stderr io.Writer, first *stageLine) *objectLine {
	if first == nil {
		return nil
	}
	return &objectLine{stderr: stderr, first: first}
}

// progress returns the report.ProgressFunc that draws the line (nil for a
// nil objectLine).
func (l *objectLine) progress() report.ProgressFunc {
	if l == nil {
		return nil
	}
	return func(stage string, done, total int) {
		l.mu.Lock()
		defer l.mu.Unlock()
		if l.done {
			return
		}
		text := fmt.Sprintf("%s: %d of %d groups", stage, done, total)
		if l.line == nil {
			l.first.clear()
			l.line = newStageLine(l.stderr, text)
			return
		}
		l.line.set(text)
	}
}

// clear erases the line (see stageLine.clear); the line is not drawn
// again.
func (l *objectLine) clear() {
	if l == nil {
		return
	}
	l.mu.Lock()
	defer l.mu.Unlock()
	l.done = true
	l.line.clear()
}
