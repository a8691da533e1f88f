/** Face classification (values of SpaceTimeMesh.faceKind). */
export const FaceKind = {
  /** Shared by two elements of the same slab. */
  interior: 0,
  /** Shared by two elements of different slabs; lies on t = const; left is the earlier slab. */
  slabInterface: 1,
  /** On t = 0 (boundary, right = −1). */
  initial: 2,
  /** On t = T (boundary, right = −1). */
  final: 3,
  /** On a non-periodic space side (boundary, right = −1, faceSide says which). */
  spaceBoundary: 4,
  /** Periodic pair: left on the high side x_k = L_k, right on the low side x_k = 0. */
  periodic: 5,
} as const;
export type FaceKindValue = (typeof FaceKind)[keyof typeof FaceKind];
