//go:build unix

package app

import (
	"os"
	"os/signal"
	"syscall"
)

// askForLayout calls write each time the process receives SIGUSR1, the
// end-to-end tests' way of asking for a fresh layout file.
func askForLayout(write func()) {
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, syscall.SIGUSR1)
	go func() {
		for range ch {
			write()
		}
	}()
}
