//go:build linux || darwin || freebsd || netbsd || openbsd || dragonfly

package pipeline

import "syscall"

// environmentErrnos are the system errors that say the machine, not the
// scan, is at fault.
var environmentErrnos = []error{
	syscall.ENOSPC, syscall.EDQUOT, syscall.EROFS, syscall.EIO, syscall.EMFILE, syscall.ENFILE,
	syscall.ENOMEM, syscall.ESTALE, syscall.EACCES, syscall.EPERM,
}
