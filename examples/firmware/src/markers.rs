//! Marker functions for exact instruction counts.
//!
//! Under `qemu-system-arm -singlestep -d exec,nochain` every executed instruction is one
//! `Trace` line tagged with the symbol it belongs to. `.ci/firmware.sh` counts the lines
//! after the last line of `pl_mark_N` (begin) and before the first line of `pl_mark_{N+1}`
//! (end): that is the measured call including its argument set-up and the `bl` to the end
//! marker. The empty pair (`pl_mark_0`, `pl_mark_1`) measures that overhead.
//!
//! Each marker makes a different volatile store, so the compiler can neither drop a call
//! (an atomic store to a never-read static would be removed) nor merge two markers.

/// The last marker passed (written only so the markers differ and stay observable).
static mut MARK: u32 = 0;

macro_rules! marker {
    ($name:ident, $n:expr) => {
        #[doc = concat!("Instruction-count marker ", stringify!($n), ".")]
        #[inline(never)]
        #[no_mangle]
        pub extern "C" fn $name() {
            // SAFETY: a volatile store of a plain integer to a static that nothing reads
            // concurrently (it is never read at all).
            unsafe { core::ptr::write_volatile(core::ptr::addr_of_mut!(MARK), $n) };
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
marker!(pl_mark_10, 10);
marker!(pl_mark_11, 11);
marker!(pl_mark_12, 12);
marker!(pl_mark_13, 13);
marker!(pl_mark_14, 14);
marker!(pl_mark_15, 15);
