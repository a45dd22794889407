package nightly

// SetHook installs a function called at each step of a file's commit
// ("snapshot", "job", "manifest", "rename", "ledger", "history"); tests use it
// to crash the process at chosen moments. It returns a function restoring the
// previous hook. Not safe to call while a run is in progress.
func SetHook(f func(point, name string)) (restore func()) {
	old := hook
	hook = f
	return func() { hook = old }
}

var (
	FolderStem = folderStem
	OneLine    = oneLine
)
