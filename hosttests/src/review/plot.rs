//! plot (to do)
