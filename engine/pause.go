package engine

import (
	"fmt"
	"os"
	"time"
)

// PauseEnv names an environment variable for crash tests only: when it
// equals a pause point's name, the run prints "paused at NAME" on stderr
// and sleeps, so that a test can kill the process at that moment. Points:
// "staged" (inputs read, nothing written), "written" (the first partition
// file written, manifest not committed), "commit" (every file written, just
// before the manifest is committed).
const PauseEnv = "SONDECLIM_TEST_PAUSE_AT"

func pauseAt(point string) {
	if os.Getenv(PauseEnv) != point {
		return
	}
	fmt.Fprintf(os.Stderr, "paused at %s\n", point)
	time.Sleep(time.Hour)
}
