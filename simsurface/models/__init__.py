"""Models of the conducting surface: analytic clean subbands and lattice models built as slices."""
