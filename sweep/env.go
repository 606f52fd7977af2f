package sweep

import (
	"runtime"

	"plumb/tsne"
)

// Env is the environment a run was computed in, recorded in study.json
// (the process that created the study) and in each run's record (the
// process that ran it), so that a layout that does not reproduce can be
// traced to a changed tool, compiler, platform or kernel path.
type Env struct {
	// Version is the plumb version; Go the Go release that built it.
	Version string `json:"plumb_version"`
	Go      string `json:"go_version"`
	// OS and Arch are GOOS and GOARCH.
	OS   string `json:"os"`
	Arch string `json:"arch"`
	// Kernels is the inner-loop kernel path (tsne.KernelPath: "avx512",
	// "avx2" or "go").
	Kernels string `json:"kernels"`
}

// CurrentEnv returns the environment of this process, with plumb version
// version.
func CurrentEnv(version string) *Env {
	return &Env{Version: version, Go: runtime.Version(), OS: runtime.GOOS, Arch: runtime.GOARCH, Kernels: tsne.KernelPath()}
}

// Differences lists the fields in which e and o differ, as
// "name a → b" strings (nil when either is nil or they agree).
func (e *Env) Differences(o *Env) []string {
	if e == nil || o == nil {
		return nil
	}
	var d []string
	add := func(name, a, b string) {
		if a != b {
			d = append(d, name+" "+a+" → "+b)
		}
	}
	add("plumb", e.Version, o.Version)
	add("go", e.Go, o.Go)
	add("os", e.OS, o.OS)
	add("arch", e.Arch, o.Arch)
	add("kernels", e.Kernels, o.Kernels)
	return d
}
