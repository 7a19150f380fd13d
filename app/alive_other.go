//go:build !unix

package main

import "os"

// processAlive reports whether a process with this number is running.
func processAlive(pid int) bool {
	p, err := os.FindProcess(pid)
	if err != nil {
		return false
	}
	p.Release()
	return true
}
