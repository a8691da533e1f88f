// The kernel module: free functions on byte addresses into one imported memory, created and sized
// by the host (src/kernels-host). Nothing here allocates.
export * from './vector';
export * from './sparse';
export * from './dense';
export * from './precond';
export * from './air';
