// Pointer helpers shared by the kernel files. Every pointer is a byte address into the one imported
// memory; indices are element indices (i32), turned into byte offsets here. Out-of-range accesses
// trap (WebAssembly bounds checks are never elided).


@inline export function f64At(base: usize, i: i32): f64 { return load<f64>(base + (<usize>i << 3)); }
@inline export function setF64(base: usize, i: i32, v: f64): void { store<f64>(base + (<usize>i << 3), v); }
@inline export function i32At(base: usize, i: i32): i32 { return load<i32>(base + (<usize>i << 2)); }
@inline export function setI32(base: usize, i: i32, v: i32): void { store<i32>(base + (<usize>i << 2), v); }
@inline export function f64Ptr(base: usize, i: i32): usize { return base + (<usize>i << 3); }
@inline export function pairAt(base: usize, i: i32): v128 { return v128.load(base + (<usize>i << 3)); }
