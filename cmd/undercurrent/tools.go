//go:build tools

// This file pins the project's dependencies while the packages that use
// them are being written; it is never built.
package main

import (
	_ "github.com/BurntSushi/toml"
	_ "github.com/apache/arrow-go/v18/arrow"
	_ "github.com/apache/arrow-go/v18/arrow/csv"
	_ "github.com/apache/arrow-go/v18/arrow/ipc"
	_ "github.com/apache/arrow-go/v18/arrow/memory"
	_ "github.com/apache/arrow-go/v18/parquet/file"
	_ "github.com/apache/arrow-go/v18/parquet/pqarrow"
	_ "github.com/nats-io/nats-server/v2/server"
	_ "github.com/nats-io/nats.go"
	_ "github.com/nats-io/nats.go/jetstream"
	_ "github.com/prometheus/client_golang/prometheus"
	_ "github.com/prometheus/client_golang/prometheus/promhttp"
	_ "github.com/schollz/progressbar/v3"
	_ "github.com/spf13/pflag"
	_ "golang.org/x/term"
	_ "gonum.org/v1/gonum/diff/fd"
	_ "gonum.org/v1/gonum/dsp/fourier"
	_ "gonum.org/v1/gonum/mat"
	_ "gonum.org/v1/gonum/optimize"
	_ "gonum.org/v1/gonum/stat"
	_ "gonum.org/v1/plot"
	_ "gonum.org/v1/plot/plotter"
	_ "gonum.org/v1/plot/vg"
	_ "gonum.org/v1/plot/vg/draw"
	_ "gonum.org/v1/plot/vg/vgsvg"
)
