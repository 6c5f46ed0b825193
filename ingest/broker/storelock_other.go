//go:build !unix

package broker

import "os"

// lockStore does not lock the store where flock is not available.
func lockStore(dir string) (*os.File, error) { return nil, nil }
