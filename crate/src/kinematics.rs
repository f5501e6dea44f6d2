//! kinematics (being written).
