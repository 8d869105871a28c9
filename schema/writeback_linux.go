package schema

import (
	"os"
	"syscall"
)

// startWriteback asks the kernel to begin writing f's dirty pages to disk
// now, without waiting for them (sync_file_range(2) with
// SYNC_FILE_RANGE_WRITE). A run syncs every file it wrote once, before it
// commits its manifest (store.Sync); the pages written back meanwhile, while
// the next station-years are analysed, are the ones that sync then does
// not wait for. Errors are ignored: it only moves work earlier, and the
// later sync reports what fails.
func startWriteback(f *os.File) {
	rc, err := f.SyscallConn()
	if err != nil {
		return
	}
	_ = rc.Control(func(fd uintptr) {
		_ = syscall.SyncFileRange(int(fd), 0, 0, syncFileRangeWrite)
	})
}

// syncFileRangeWrite is SYNC_FILE_RANGE_WRITE of <linux/fs.h>: start
// write-out of the dirty pages in the range, do not wait for it.
const syncFileRangeWrite = 0x2
