//! simulate (to do)
