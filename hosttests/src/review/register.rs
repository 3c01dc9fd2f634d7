//! register (to do)
