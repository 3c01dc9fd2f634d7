//! Marker functions for exact instruction counts.
//!
//! Under `qemu-system-arm -singlestep -d exec,nochain` every executed instruction is one
//! `Trace` line tagged with the symbol it belongs to. `.ci/firmware.sh` counts the lines
//! after the last line of `pl_mark_N` (begin) and before the first line of `pl_mark_{N+1}`
//! (end): that is the measured call including its argument set-up and the `bl` to the end
//! marker. The empty pair (`pl_mark_0`, `pl_mark_1`) measures that overhead.
//!
//! Each marker stores a different value, so the compiler cannot merge them into one symbol.

use core::sync::atomic::{AtomicU32, Ordering};

/// The last marker passed (written only so the markers differ and stay observable).
pub static MARK: AtomicU32 = AtomicU32::new(0);

macro_rules! marker {
    ($name:ident, $n:expr) => {
        #[doc = concat!("Instruction-count marker ", stringify!($n), ".")]
        #[inline(never)]
        #[no_mangle]
        pub extern "C" fn $name() {
            MARK.store($n, Ordering::SeqCst);
        }
    };
}

marker!(pl_mark_0, 0);
marker!(pl_mark_1, 1);
marker!(pl_mark_2, 2);
marker!(pl_mark_3, 3);
marker!(pl_mark_4, 4);
marker!(pl_mark_5, 5);
marker!(pl_mark_6, 6);
marker!(pl_mark_7, 7);
marker!(pl_mark_8, 8);
marker!(pl_mark_9, 9);
