//! Worst-case stack by painting: fill the free stack region with a pattern early in `main`,
//! run the firmware, then find the lowest word that is no longer the pattern.
//!
//! The region is `__sheap` (end of `.bss`/`.uninit`, from cortex-m-rt's `link.x`) up to just
//! below the stack pointer of the painting function. The high-water mark is measured from
//! `_stack_start` (the initial stack pointer, top of RAM) and so includes the reset handler,
//! `main`, every call below it and every interrupt frame.

const PATTERN: u32 = 0xC0DE_5A5A;

extern "C" {
    static __sheap: u32;
    static _stack_start: u32;
}

fn bottom() -> usize {
    // Only the address of the linker symbol is taken (no read): safe.
    core::ptr::addr_of!(__sheap) as usize
}

fn top() -> usize {
    core::ptr::addr_of!(_stack_start) as usize
}

/// Paint the unused stack. Call once, early in `main`, before interrupts are enabled.
#[inline(never)]
pub fn paint() {
    let sp = cortex_m::register::msp::read() as usize;
    // Stay 16 bytes below this function's stack pointer; nothing lives below it.
    let end = sp.saturating_sub(16) & !3;
    let mut p = (bottom() + 3) & !3;
    while p < end {
        // SAFETY: [__sheap, sp) is RAM that no object occupies: below the stack pointer and
        // above every static. Interrupts are not enabled yet.
        unsafe { core::ptr::write_volatile(p as *mut u32, PATTERN) };
        p += 4;
    }
}

/// Bytes of stack used at most since [`paint`] (from the top of RAM).
pub fn high_water() -> usize {
    let mut p = (bottom() + 3) & !3;
    let t = top();
    while p < t {
        // SAFETY: reading RAM between the statics and the top of the stack.
        if unsafe { core::ptr::read_volatile(p as *const u32) } != PATTERN {
            break;
        }
        p += 4;
    }
    t - p
}

/// Bytes available for the stack (top of RAM − end of statics).
pub fn available() -> usize {
    top() - bottom()
}
