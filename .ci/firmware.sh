#!/usr/bin/env bash
# Firmware proof on emulated Cortex-M: build and run every firmware example in QEMU, measure
# every budget figure, print a table (figure / measured / limit / goal) and fail when a figure
# exceeds its enforced limit (examples/firmware/budgets.toml) or any example fails. Also
# cross-compiles the real-board example examples/rp2040 (RP2040, built, not run).
#
# Every check here is promised: when the thumb targets, QEMU, binutils or defmt-print cannot
# be installed, the script fails, unless PHOTON_ALLOW_SKIPS=1 is set; then it skips what
# cannot run, lists every skip and ends with "firmware: passed with skips: <list>" (and
# `.ci/run`, through PHOTON_SKIPS_FILE, ends with "passed with skips").
#
# Run from the repository root: bash .ci/firmware.sh
set -euo pipefail

cd "$(dirname "${BASH_SOURCE[0]}")/.."
FW=examples/firmware
BUDGETS=${FIRMWARE_BUDGETS:-$FW/budgets.toml}
V6=thumbv6m-none-eabi
V7=thumbv7em-none-eabihf
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
# The firmware package is built into its own target directory, wherever the caller's
# CARGO_TARGET_DIR points (the ELF paths below depend on it).
export CARGO_TARGET_DIR="$PWD/$FW/target"

failures=0
fail() { echo "FAIL: $*"; failures=$((failures + 1)); }
step() { echo; echo "== $*"; }
skips=()
# skip_or_fail WHAT: a promised check cannot run. Fatal unless PHOTON_ALLOW_SKIPS=1.
skip_or_fail() {
    if [ "${PHOTON_ALLOW_SKIPS:-0}" = 1 ]; then
        echo "SKIPPED (PHOTON_ALLOW_SKIPS=1): $*"
        skips+=("$*")
        if [ -n "${PHOTON_SKIPS_FILE:-}" ]; then echo "firmware: $*" >>"$PHOTON_SKIPS_FILE"; fi
    else
        echo "FAIL: cannot run: $* (set PHOTON_ALLOW_SKIPS=1 to skip it and say so)"
        exit 1
    fi
}
# The closing line: failures, else skips, else all passed.
finish() {
    echo
    if [ "$failures" != 0 ]; then
        echo "firmware: $failures failure(s)"
        exit 1
    elif [ "${#skips[@]}" != 0 ]; then
        local list
        list=$(printf '%s; ' "${skips[@]}")
        echo "firmware: passed with skips: ${list%; }"
    else
        echo "firmware: all examples passed, every figure within its limit"
    fi
    exit 0
}

# --------------------------------------------------------------------------------------
# Install what is needed (a fresh CI machine has none of it)
# --------------------------------------------------------------------------------------
step "install"
if ! command -v qemu-system-arm >/dev/null || ! command -v arm-none-eabi-size >/dev/null; then
    if ! { apt-get update -q && apt-get install -y -q --no-install-recommends \
        qemu-system-arm binutils-arm-none-eabi; }; then
        echo "apt-get install qemu-system-arm binutils-arm-none-eabi refused"
    fi
fi
have_qemu=1
if ! command -v qemu-system-arm >/dev/null; then
    skip_or_fail "QEMU runs and the budgets measured in them (instruction counts, stack, session state) (qemu-system-arm not installed)"
    have_qemu=0
fi
have_size=1
if ! command -v arm-none-eabi-size >/dev/null; then
    skip_or_fail "flash and RAM size figures (arm-none-eabi-size not installed)"
    have_size=0
fi
have_targets=1
if ! rustup target add "$V6" thumbv7m-none-eabi "$V7"; then
    for t in "$V6" "$V7"; do
        rustup target list --installed | grep -qx "$t" || have_targets=0
    done
fi
if [ "$have_targets" = 0 ]; then
    skip_or_fail "every firmware build, run and budget (rustup target add refused)"
    finish
fi
have_defmt_print=1
if ! command -v defmt-print >/dev/null; then
    if ! timeout 600 cargo install defmt-print --version 1.2.0 --locked -q; then
        skip_or_fail "decoding the defmt example and its stack figure (cargo install defmt-print refused)"
        have_defmt_print=0
    fi
fi

# --------------------------------------------------------------------------------------
# Library builds for both thumb targets, with the defmt feature
# --------------------------------------------------------------------------------------
step "library: defmt feature on $V6 and $V7"
for t in "$V6" "$V7"; do
    cargo build -q --lib --target "$t" --features defmt || fail "library with defmt for $t"
done

# --------------------------------------------------------------------------------------
# Firmware builds
# --------------------------------------------------------------------------------------
EXAMPLES="curing irq footprint footprint_full hotpath profile_meter profile_f64"
NOPANIC="nopanic_frontend_meter nopanic_profile nopanic_integrator nopanic_session nopanic_autorange nopanic_journal nopanic_exposure nopanic_curing nopanic_spectral nopanic_photochem"
step "firmware builds (release, opt-level s, fat LTO)"
for t in "$V6" "$V7"; do
    bins=""
    for b in $EXAMPLES; do bins="$bins --bin $b"; done
    # shellcheck disable=SC2086
    (cd "$FW" && cargo build -q --release --target "$t" $bins) || fail "firmware build for $t"
    (cd "$FW" && cargo build -q --release --target "$t" --features defmt --bin defmt_log) ||
        fail "defmt example build for $t"
done
elf() { echo "$FW/target/$1/${3:-release}/$2"; }

step "no-panic link checks ($V6, release + library overflow checks)"
for b in $NOPANIC; do
    if (cd "$FW" && cargo build -q --profile nopanic --target "$V6" --bin "$b" 2>"$WORK/$b.err"); then
        echo "  linked: $b"
    else
        grep -E "undefined symbol|error" "$WORK/$b.err" | head -5 || true
        fail "no-panic check $b: a panic path survives (or the build failed)"
    fi
done

# --------------------------------------------------------------------------------------
# Real-board example: RP2040 (Raspberry Pi Pico) — cross-compiled, never run here
# --------------------------------------------------------------------------------------
# A package of its own (examples/rp2040, committed Cargo.lock, --locked), in its own target
# directory. QEMU stays the run proof; this proves the library builds against a real HAL.
RP=examples/rp2040
rp_elf="$RP/target/$V6/release/photon-ledger-rp2040"
step "RP2040 board example: cargo build --release ($V6, not run)"
if (cd "$RP" && CARGO_TARGET_DIR="$PWD/target" cargo build -q --release --locked --target "$V6"); then
    echo "  built: $rp_elf"
    (cd "$RP" && CARGO_TARGET_DIR="$PWD/target" cargo clippy -q --release --locked --target "$V6" -- -D warnings) ||
        fail "RP2040 example: clippy warnings"
    if [ "$have_size" = 1 ]; then
        arm-none-eabi-size "$rp_elf" | sed 's/^/  /'
        # The flash routine runs while execute-in-place is off: it must be linked into RAM,
        # and the second-stage boot loader must sit at the start of the flash.
        # nm's output is read whole first: `grep -q` stopping early would make nm fail with
        # SIGPIPE, which pipefail turns into a false failure.
        rp_syms=$(arm-none-eabi-nm -C "$rp_elf")
        if grep -Eq '^2[0-9a-f]{7} t .*flash::rom_sequence$' <<<"$rp_syms"; then
            echo "  flash routine linked in RAM"
        else
            fail "RP2040 example: flash::rom_sequence is not linked in RAM"
        fi
        if grep -Eq '^10000000 [rRdD] .*BOOT2_FIRMWARE$' <<<"$rp_syms"; then
            echo "  boot2 at 0x10000000"
        else
            fail "RP2040 example: BOOT2_FIRMWARE is not at 0x10000000"
        fi
    fi
else
    fail "RP2040 example build (examples/rp2040, cargo build --release)"
fi

# --------------------------------------------------------------------------------------
# Runs in QEMU
# --------------------------------------------------------------------------------------
qemu() { # qemu TARGET ELF [extra qemu args...]
    local t=$1 e=$2
    shift 2
    if [ "$t" = "$V6" ]; then
        set -- -cpu cortex-m0 -machine microbit "$@"
    else
        set -- -cpu cortex-m4 -machine mps2-an386 "$@"
    fi
    timeout 60 qemu-system-arm "$@" -nographic -semihosting-config enable=on,target=native -kernel "$e"
}
declare -A FIG
run_example() { # run_example TARGET BIN [extra qemu args]
    local t=$1 b=$2
    local log="$WORK/$b-$t.out"
    shift 2
    if qemu "$t" "$(elf "$t" "$b")" "$@" >"$log" 2>&1; then
        echo "  pass: $b on $t: $(grep -E 'passed' "$log" | tail -1 || echo 'exit status success')"
    else
        sed 's/^/    /' "$log" | tail -20
        fail "$b on $t"
    fi
}
figure_from() { grep -E "^(INFO +)?FIGURE $2 " "$1" | tail -1 | awk '{print $NF}'; }
# need_figure VAR LOG NAME: VAR := the figure's value; a missing or non-numeric FIGURE line
# fails, naming the figure and the example it should come from (VAR is then empty).
need_figure() {
    local nf_value=""
    if [ -f "$2" ]; then nf_value=$(figure_from "$2" "$3" || true); fi
    if ! [[ "$nf_value" =~ ^[0-9]+$ ]]; then
        fail "FIGURE $3 missing or not a number in the output of $(basename "$2" .out)"
        nf_value=""
    fi
    printf -v "$1" '%s' "$nf_value"
}

if [ "$have_qemu" = 1 ]; then
    for t in "$V6" "$V7"; do
        step "examples on $t"
        run_example "$t" curing
        # -icount: SysTick fires after a fixed number of instructions, so the interrupt-driven
        # run is the same on every machine, however loaded.
        run_example "$t" irq -icount shift=0
        run_example "$t" footprint
        run_example "$t" footprint_full
        # The meter from a host-computed profile, and its twin configured on the device
        # (which checks on the target that both give the same profile).
        run_example "$t" profile_meter
        run_example "$t" profile_f64
        # defmt: binary log on stdout, decoded with defmt-print.
        dlog="$WORK/defmt_log-$t.bin"
        if qemu "$t" "$(elf "$t" defmt_log)" >"$dlog" 2>"$WORK/defmt_log-$t.err"; then
            if [ "$have_defmt_print" = 1 ]; then
                defmt-print -e "$(elf "$t" defmt_log)" <"$dlog" >"$WORK/defmt_log-$t.out" 2>&1 ||
                    fail "defmt-print on $t"
                sed 's/^/    /' "$WORK/defmt_log-$t.out" | grep -E "TargetMet|passed" || true
                grep -q "defmt_log: 3 passed, 0 failed" "$WORK/defmt_log-$t.out" ||
                    fail "defmt_log on $t: decoded log lacks the pass line"
            fi
            echo "  pass: defmt_log on $t (exit status success)"
        else
            fail "defmt_log on $t"
        fi
        if [ "$t" = "$V6" ]; then
            for b in $NOPANIC; do
                if qemu "$t" "$(elf "$t" "$b" nopanic)" >/dev/null 2>&1; then
                    echo "  pass: $b runs on $t"
                else
                    fail "$b run on $t"
                fi
            done
        fi
        # Stack: the deepest of the examples that report it; each of them must report it.
        stack_examples="curing irq"
        [ "$have_defmt_print" = 1 ] && stack_examples="$stack_examples defmt_log"
        s=0
        for b in $stack_examples; do
            need_figure v "$WORK/$b-$t.out" stack_bytes
            [ -n "$v" ] || continue
            echo "  stack $b on $t: $v bytes"
            [ "$v" -gt "$s" ] && s=$v
        done
        FIG[stack_$t]=$s
        # The full firmware (journal and export) has a budget of its own.
        need_figure v "$WORK/footprint_full-$t.out" stack_bytes
        echo "  stack footprint_full on $t: ${v:-?} bytes"
        FIG[stack_full_$t]=$v
        need_figure v "$WORK/curing-$t.out" session_state_bytes
        FIG[session_state_$t]=$v
    done
fi

# --------------------------------------------------------------------------------------
# Exact instruction counts: one Trace line per executed instruction
# --------------------------------------------------------------------------------------
# Soft-float routines: every compiler-builtins float routine (the __aeabi_* float names,
# including the integer-to-float conversions, the half-precision ones and the cdcmp/cfcmp
# compares; the libgcc-style __addsf3 … __unorddf2 for half, single, double, quad and
# extended precision, __float*/__fix*/__extend*/__trunc*, __powi*, complex __muldc3 …,
# __gnu_h2f_ieee/__gnu_f2h_ieee), the libm names compiler-builtins exports on targets
# without a C library (fmax, sqrt, exp, …, and their f32/f16/f128 twins), and any function
# of compiler_builtins::float, compiler_builtins::math or the libm crate, mangled (legacy or
# v0) or demangled. One awk function, used by the instruction counts (executed
# instructions) and by the profile link check (linked symbols). The hot path's positive
# controls (markers 10-13) prove the pattern sees a multiply and an integer conversion; the
# link check's control is profile_f64, which must be seen to link soft float.
SOFTFLOAT_AWK='
        function softfloat(s) {
            if (s ~ /^__aeabi_([dfch]|u?i2[dfh]|u?l2[dfh])/) return 1
            if (s ~ /^__gnu_(h2f|f2h)_ieee$/) return 1
            if (s ~ /^__(add|sub|mul|div)[hsdtxk]f3(vfp)?$/) return 1
            if (s ~ /^__neg[hsdtxk]f2(vfp)?$/) return 1
            if (s ~ /^__(eq|ne|lt|le|gt|ge|un|unord|cmp)[hsdtxk]f2(vfp)?$/) return 1
            if (s ~ /^__(float|fix|extend|trunc)[a-z0-9]*$/) return 1
            if (s ~ /^__powi[hsdtxk]f2$/) return 1
            if (s ~ /^__(mul|div)[hsdtxk]c3$/) return 1
            if (s ~ /^(fmax|fmin|fmaximum|fminimum|fmaximum_num|fminimum_num|fdim|fabs|copysign|sqrt|cbrt|hypot|exp|exp2|exp10|expm1|log|log2|log10|log1p|pow|sin|cos|tan|sincos|asin|acos|atan|atan2|sinh|cosh|tanh|asinh|acosh|atanh|floor|ceil|round|roundeven|trunc|rint|nearbyint|lrint|lround|llrint|llround|fma|fmod|remainder|remquo|modf|frexp|ldexp|scalbn|scalbln|ilogb|logb|nextafter|nexttoward|erf|erfc|tgamma|lgamma|lgamma_r|j0|j1|jn|y0|y1|yn|significand|drem|gamma|exp10|pow10)(f|l|f16|f128)?$/) return 1
            if (s ~ /^lgamma(f|l|f16|f128)_r$/) return 1
            if (s ~ /compiler_builtins5float|compiler_builtins4math|4libm4math|4libm4libm|compiler_builtins::float|compiler_builtins::math|(^|[^a-z_])libm::/) return 1
            return 0
        }'
count_between() { # count_between LOG BEGIN END -> "instructions soft_float_instructions"
    awk -v B="$2" -v E="$3" "$SOFTFLOAT_AWK"'
        /^Trace/ {
            sym = $NF
            if (sym == B) { inside = 1; n = 0; sf = 0; next }
            if (inside && sym == E) { print n, sf; inside = 0; found = 1; exit }
            if (inside) {
                n++
                if (softfloat(sym)) sf++
            }
        }
        END { if (!found) print "missing missing" }' "$1"
}
if [ "$have_qemu" = 1 ]; then
    for t in "$V6" "$V7"; do
        step "instruction counts on $t (-singlestep -d exec,nochain)"
        log="$WORK/exec-$t.log"
        if ! qemu "$t" "$(elf "$t" hotpath)" -singlestep -d exec,nochain -D "$log" >"$WORK/hotpath-$t.out" 2>&1; then
            sed 's/^/    /' "$WORK/hotpath-$t.out" | tail -20
            fail "hotpath on $t"
            continue
        fi
        read -r base _ < <(count_between "$log" pl_mark_0 pl_mark_1)
        read -r acc acc_sf < <(count_between "$log" pl_mark_2 pl_mark_3)
        read -r st st_sf < <(count_between "$log" pl_mark_4 pl_mark_5)
        read -r cr cr_sf < <(count_between "$log" pl_mark_6 pl_mark_7)
        read -r rc rc_sf < <(count_between "$log" pl_mark_8 pl_mark_9)
        read -r _ mul_sf < <(count_between "$log" pl_mark_10 pl_mark_11)
        read -r _ conv_sf < <(count_between "$log" pl_mark_12 pl_mark_13)
        read -r wide wide_sf < <(count_between "$log" pl_mark_14 pl_mark_15)
        if [ "$base" = missing ] || [ "$acc" = missing ] || [ "$st" = missing ] ||
            [ "$cr" = missing ] || [ "$rc" = missing ] || [ "$mul_sf" = missing ] ||
            [ "$conv_sf" = missing ] || [ "$wide" = missing ]; then
            fail "markers missing in the trace on $t"
            continue
        fi
        # Positive controls: a path known to call soft float must be seen to.
        if [ "$mul_sf" -le 0 ]; then
            fail "soft-float control on $t: an f64 multiply counted $mul_sf soft-float instructions (the pattern misses it)"
        fi
        if [ "$conv_sf" -le 0 ]; then
            fail "soft-float control on $t: an i32 to f64 conversion counted $conv_sf soft-float instructions (the pattern misses it)"
        fi
        echo "  soft-float controls: f64 multiply $mul_sf, i32 to f64 $conv_sf soft-float instructions"
        # Net of the marker pair itself (the `bl` to the end marker).
        FIG[accept_$t]=$((acc - base))
        FIG[step_steady_$t]=$((st - base))
        FIG[step_target_$t]=$((cr - base))
        FIG[step_$t]=$(((st > cr ? st : cr) - base))
        FIG[softfloat_$t]=$((acc_sf + st_sf + cr_sf + rc_sf + wide_sf))
        FIG[accept_wide_$t]=$((wide - base))
        FIG[range_change_$t]=$((rc - base))
        FIG[range_change_sf_$t]=$rc_sf
        echo "  marker overhead $base; accept $acc; on_reading steady $st, at target $cr; range change $rc ($rc_sf soft-float); wide accept $wide ($wide_sf soft-float)"
    done
fi

# --------------------------------------------------------------------------------------
# Flash and static RAM
# --------------------------------------------------------------------------------------
if [ "$have_size" = 1 ]; then
    step "sizes (arm-none-eabi-size)"
    for t in "$V6" "$V7"; do
        for b in footprint footprint_full curing irq defmt_log profile_meter profile_f64; do
            if ! read -r text data bss _ < <(arm-none-eabi-size "$(elf "$t" "$b")" | tail -1) ||
                ! [[ "$text$data$bss" =~ ^[0-9]+$ ]]; then
                fail "size of $b on $t not read"
                continue
            fi
            echo "  $t $b: text $text, data $data, bss $bss"
            FIG[text_${b}_$t]=$text
            FIG[ram_${b}_$t]=$((data + bss))
        done
    done
fi

# --------------------------------------------------------------------------------------
# Soft-float link check: a meter built from a profile links no float routine at all
# --------------------------------------------------------------------------------------
if [ "$have_size" = 1 ]; then
    step "soft-float symbols linked (arm-none-eabi-nm): profile_meter none, profile_f64 (control) some"
    for t in "$V6" "$V7"; do
        for b in profile_meter profile_f64; do
            list="$WORK/softfloat-$b-$t.txt"
            if ! arm-none-eabi-nm "$(elf "$t" "$b")" >"$WORK/nm-$b-$t.txt"; then
                fail "arm-none-eabi-nm $b on $t"
                continue
            fi
            awk "$SOFTFLOAT_AWK"' NF >= 2 && softfloat($NF) { print $NF }' \
                "$WORK/nm-$b-$t.txt" | sort -u >"$list"
            FIG[softfloat_link_${b}_$t]=$(wc -l <"$list" | tr -d ' ')
        done
        n_meter=${FIG[softfloat_link_profile_meter_$t]:-}
        n_f64=${FIG[softfloat_link_profile_f64_$t]:-}
        echo "  $t: profile_meter ${n_meter:-?} soft-float symbols, profile_f64 ${n_f64:-?} ($(head -6 "$WORK/softfloat-profile_f64-$t.txt" 2>/dev/null | tr '\n' ' ')...)"
        if ! [[ "$n_f64" =~ ^[0-9]+$ ]] || [ "$n_f64" -le 0 ]; then
            fail "soft-float link control on $t: profile_f64 links f64 arithmetic and libm, but the filter found ${n_f64:-nothing}"
        fi
        if [ "$n_meter" != 0 ]; then
            sed 's/^/    links: /' "$WORK/softfloat-profile_meter-$t.txt" 2>/dev/null | head -20
        fi
    done
    FIG[softfloat_link_m0]=${FIG[softfloat_link_profile_meter_$V6]:-}
    FIG[softfloat_link_m4f]=${FIG[softfloat_link_profile_meter_$V7]:-}
fi

# --------------------------------------------------------------------------------------
# Budgets
# --------------------------------------------------------------------------------------
budget() { # budget SECTION KEY
    awk -v S="[$1]" -v K="$2" '
        /^\[/ { inside = ($0 == S); next }
        inside && $1 == K { sub(/^[^=]*=[ \t]*/, ""); gsub(/^"|"$/, ""); print; exit }' "$BUDGETS"
}
step "budgets ($BUDGETS)"
printf '%-34s %12s %10s %8s  %s\n' figure measured limit goal status
check() { # check SECTION MEASURED
    local name=$1 measured=$2 goal limit status
    goal=$(budget "$name" goal)
    limit=$(budget "$name" limit)
    if [ -z "$goal" ] || [ -z "$limit" ]; then
        fail "budget $name missing in $BUDGETS"
        return
    fi
    if ! [[ "$goal" =~ ^[0-9]+$ ]] || ! [[ "$limit" =~ ^[0-9]+$ ]]; then
        fail "budget $name: goal '$goal' and limit '$limit' must both be whole numbers"
        return
    fi
    if [ "$limit" != "$goal" ] && { [ -z "$(budget "$name" reason)" ] || [ -z "$(budget "$name" reach)" ]; }; then
        fail "budget $name: limit $limit differs from goal $goal without reason and reach"
    fi
    if [ -z "$measured" ] || ! [[ "$measured" =~ ^[0-9]+$ ]]; then
        status="NOT MEASURED"
        fail "figure $name not measured"
    elif [ "$measured" -gt "$limit" ]; then
        status="OVER LIMIT"
        fail "$name: $measured > limit $limit"
    elif [ "$measured" -gt "$goal" ]; then
        status="ok (goal not met)"
    else
        status="ok"
    fi
    printf '%-34s %12s %10s %8s  %s\n' "$name" "$measured" "$limit" "$goal" "$status"
}
if [ "$have_qemu" = 1 ]; then
    check hot_path_accept_m0 "${FIG[accept_$V6]:-}"
    check hot_path_accept_m4f "${FIG[accept_$V7]:-}"
    check hot_path_soft_float_m0 "${FIG[softfloat_$V6]:-}"
    check range_change_m0 "${FIG[range_change_$V6]:-}"
    check hot_path_accept_wide_m0 "${FIG[accept_wide_$V6]:-}"
    check step_on_reading_m0 "${FIG[step_$V6]:-}"
    check step_on_reading_m4f "${FIG[step_$V7]:-}"
    check ram_session_state_m0 "${FIG[session_state_$V6]:-}"
    check stack_m0 "${FIG[stack_$V6]:-}"
    check stack_m4f "${FIG[stack_$V7]:-}"
    check stack_full_curing_m0 "${FIG[stack_full_$V6]:-}"
    check stack_full_curing_m4f "${FIG[stack_full_$V7]:-}"
fi
if [ "$have_size" = 1 ]; then
    check flash_pipeline_controller_m0 "${FIG[text_footprint_$V6]:-}"
    check flash_full_curing_m0 "${FIG[text_footprint_full_$V6]:-}"
    check ram_static_footprint_m0 "${FIG[ram_footprint_$V6]:-}"
    check flash_profile_meter_m0 "${FIG[text_profile_meter_$V6]:-}"
    check profile_meter_soft_float_symbols_m0 "${FIG[softfloat_link_m0]:-}"
    check profile_meter_soft_float_symbols_m4f "${FIG[softfloat_link_m4f]:-}"
fi
echo
echo "reported, no budget:"
printf '  %-40s %s\n' \
    "on_reading steady / at target, M0" "${FIG[step_steady_$V6]:-?} / ${FIG[step_target_$V6]:-?}" \
    "on_reading steady / at target, M4F" "${FIG[step_steady_$V7]:-?} / ${FIG[step_target_$V7]:-?}" \
    "soft-float in accept / steady / target / range change, M0" "${FIG[softfloat_$V6]:-?} (${FIG[range_change_sf_$V6]:-?} in the range change)" \
    "accept, 24-bit converter at 10 Hz on a 1 MHz tick, M4F" "${FIG[accept_wide_$V7]:-?}" \
    "accept on a range change, M4F" "${FIG[range_change_$V7]:-?} (${FIG[range_change_sf_$V7]:-?} soft-float)" \
    "soft-float in hot path, M4F (f64 is software there too)" "${FIG[softfloat_$V7]:-?}" \
    "session state, M4F (bytes)" "${FIG[session_state_$V7]:-?}" \
    "text: footprint M4F" "${FIG[text_footprint_$V7]:-?}" \
    "text: curing example with checks+printing, M0 / M4F" "${FIG[text_curing_$V6]:-?} / ${FIG[text_curing_$V7]:-?}" \
    "text: irq example, M0 / M4F" "${FIG[text_irq_$V6]:-?} / ${FIG[text_irq_$V7]:-?}" \
    "text: defmt example, M0 / M4F" "${FIG[text_defmt_log_$V6]:-?} / ${FIG[text_defmt_log_$V7]:-?}" \
    "data+bss: curing / irq, M0" "${FIG[ram_curing_$V6]:-?} / ${FIG[ram_irq_$V6]:-?}" \
    "text: full curing firmware (journal + export), M4F" "${FIG[text_footprint_full_$V7]:-?}" \
    "text: meter from a profile / configured in f64 (profile_meter / profile_f64), M0" "${FIG[text_profile_meter_$V6]:-?} / ${FIG[text_profile_f64_$V6]:-?}" \
    "text: meter from a profile / configured in f64, M4F" "${FIG[text_profile_meter_$V7]:-?} / ${FIG[text_profile_f64_$V7]:-?}" \

finish
