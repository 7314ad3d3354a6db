//! Direct integration of the equation between its ends (being written).
