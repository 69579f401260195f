//go:build !amd64 || purego

package dense

func selectKernel() kernel { return goKernel }

// kernels lists every kernel this build can run on this CPU.
func kernels() []kernel { return []kernel{goKernel} }
