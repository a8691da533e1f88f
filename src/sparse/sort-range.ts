/**
 * Sort arr[start .. end-1] ascending in place without allocating for short ranges
 * (insertion sort; block rows of DG matrices hold a handful of blocks). Long ranges use the
 * built-in typed-array sort on a view.
 */
export function sortInt32Range(arr: Int32Array, start: number, end: number): void {
  if (end - start > 48) {
    arr.subarray(start, end).sort();
    return;
  }
  for (let i = start + 1; i < end; i++) {
    const v = arr[i];
    let j = i - 1;
    while (j >= start && arr[j] > v) {
      arr[j + 1] = arr[j];
      j--;
    }
    arr[j + 1] = v;
  }
}
