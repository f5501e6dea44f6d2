//! geometry (being written).
