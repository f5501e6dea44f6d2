//! conventions (being written).
