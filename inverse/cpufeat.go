package inverse

import "golang.org/x/sys/cpu"

// haveAVX2 reports whether the processor has AVX2, which the amd64 kernels of the
// fits use when present (their results are bit for bit those of the portable code:
// the same operations in the same order, four readings or elements to a register, and
// no fused multiply-add).
var haveAVX2 = cpu.X86.HasAVX2 && cpu.X86.HasAVX
