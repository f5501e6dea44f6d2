//! kernels (being written).
