package main

import (
	"fmt"
	"io"
	"sync"
	"time"

	"undercurrent/ingest"
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
