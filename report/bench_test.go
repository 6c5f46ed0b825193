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
