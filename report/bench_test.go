package report

import (
	"io"
	"testing"
)

func BenchmarkWriteJSON(b *testing.B) {
	d := fenwickLane(true)
	for b.Loop() {
		if err := WriteJSON(io.Discard, d); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkWriteCSV(b *testing.B) {
	d := fenwickLane(true)
	for b.Loop() {
		if err := WriteCSV(io.Discard, d); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkWriteGeoJSON(b *testing.B) {
	d := fenwickLane(true)
	for b.Loop() {
		if err := WriteGeoJSON(io.Discard, d); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkWriteHTML renders the crew report with its six plots.
func BenchmarkWriteHTML(b *testing.B) {
	d := fenwickLane(true)
	for b.Loop() {
		if err := WriteHTML(io.Discard, d); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkBuild measures the report's side of locate: eight fitted
// traverses of 31 readings into a document with route and findings (the
// fits themselves are done once, outside the loop).
func BenchmarkBuild(b *testing.B) {
	fits := kestrelMoor(b)
	set := &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6}
	for b.Loop() {
		if _, err := Build(Document{}, fits, set); err != nil {
			b.Fatal(err)
		}
	}
}
