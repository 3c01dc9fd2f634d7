//! explain (to do)
