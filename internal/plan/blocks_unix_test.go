package plan

import (
	"os"
	"syscall"
)

func fileBlocks(info os.FileInfo) (uint64, int64) {
	if st, ok := info.Sys().(*syscall.Stat_t); ok {
		return st.Ino, st.Blocks
	}
	return 0, info.Size()
}
