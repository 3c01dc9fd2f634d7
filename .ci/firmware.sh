#!/usr/bin/env bash
# Firmware proof on emulated Cortex-M: build and run every firmware example in QEMU, measure
# every budget figure, print a table (figure / measured / limit / goal) and fail when a figure
# exceeds its enforced limit (examples/firmware/budgets.toml) or any example fails.
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

failures=0
fail() { echo "FAIL: $*"; failures=$((failures + 1)); }
step() { echo; echo "== $*"; }

# --------------------------------------------------------------------------------------
# Install what is needed (a fresh CI machine has none of it)
# --------------------------------------------------------------------------------------
step "install"
have_qemu=1
if ! command -v qemu-system-arm >/dev/null || ! command -v arm-none-eabi-size >/dev/null; then
    if ! { apt-get update -q && apt-get install -y -q --no-install-recommends \
        qemu-system-arm binutils-arm-none-eabi; }; then
        echo "SKIPPED: QEMU runs and size figures (apt-get install qemu-system-arm binutils-arm-none-eabi refused)"
        have_qemu=0
    fi
fi
have_targets=1
if ! rustup target add "$V6" thumbv7m-none-eabi "$V7"; then
    echo "SKIPPED: every firmware build (rustup target add refused)"
    have_targets=0
fi
have_defmt_print=1
if ! command -v defmt-print >/dev/null; then
    if ! timeout 600 cargo install defmt-print --version 1.2.0 --locked -q; then
        echo "SKIPPED: decoding the defmt example (cargo install defmt-print refused); it is built and run only"
        have_defmt_print=0
    fi
fi
if [ "$have_targets" = 0 ]; then
    echo "firmware: nothing to do without the thumb targets"
    exit 0
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
EXAMPLES="curing irq footprint footprint_full hotpath"
NOPANIC="nopanic_frontend_meter nopanic_integrator nopanic_session nopanic_autorange nopanic_journal nopanic_exposure nopanic_curing nopanic_spectral nopanic_photochem"
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

if [ "$have_qemu" = 0 ]; then
    echo "firmware: built; QEMU runs and measurements skipped"
    [ "$failures" = 0 ] || exit 1
    exit 0
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

for t in "$V6" "$V7"; do
    step "examples on $t"
    run_example "$t" curing
    # -icount: SysTick fires after a fixed number of instructions, so the interrupt-driven
    # run is the same on every machine, however loaded.
    run_example "$t" irq -icount shift=0
    run_example "$t" footprint
    run_example "$t" footprint_full
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
    # Stack: the deepest of the examples that report it.
    s=0
    for f in "$WORK/curing-$t.out" "$WORK/irq-$t.out" "$WORK/defmt_log-$t.out"; do
        [ -f "$f" ] || continue
        v=$(figure_from "$f" stack_bytes)
        [ -n "$v" ] && [ "$v" -gt "$s" ] && s=$v
    done
    FIG[stack_$t]=$s
    FIG[session_state_$t]=$(figure_from "$WORK/curing-$t.out" session_state_bytes)
done

# --------------------------------------------------------------------------------------
# Exact instruction counts: one Trace line per executed instruction
# --------------------------------------------------------------------------------------
count_between() { # count_between LOG BEGIN END -> "instructions soft_float_instructions"
    awk -v B="$2" -v E="$3" '
        /^Trace/ {
            sym = $NF
            if (sym == B) { inside = 1; n = 0; sf = 0; next }
            if (inside && sym == E) { print n, sf; inside = 0; found = 1; exit }
            if (inside) {
                n++
                if (sym ~ /^(__aeabi_[fd]|__(add|sub|mul|div|neg)[sd]f3|__(fix|float)[a-z]*[sd]f|__(eq|ne|lt|le|gt|ge|un|cmp)[sd]f2|__extend|__trunc|_ZN17compiler_builtins5float|_RNvNtNtCs[A-Za-z0-9_]*17compiler_builtins5float)/) sf++
            }
        }
        END { if (!found) print "missing missing" }' "$1"
}
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
    if [ "$base" = missing ] || [ "$acc" = missing ] || [ "$st" = missing ] || [ "$cr" = missing ]; then
        fail "markers missing in the trace on $t"
        continue
    fi
    # Net of the marker pair itself (the `bl` to the end marker).
    FIG[accept_$t]=$((acc - base))
    FIG[step_steady_$t]=$((st - base))
    FIG[step_target_$t]=$((cr - base))
    FIG[step_$t]=$(( (st > cr ? st : cr) - base ))
    FIG[softfloat_$t]=$((acc_sf + st_sf + cr_sf))
    FIG[range_change_$t]="$((rc - base)) ($rc_sf soft-float)"
    echo "  marker overhead $base; accept $acc; on_reading steady $st, at target $cr; range change $rc ($rc_sf soft-float)"
done

# --------------------------------------------------------------------------------------
# Flash and static RAM
# --------------------------------------------------------------------------------------
step "sizes (arm-none-eabi-size)"
for t in "$V6" "$V7"; do
    for b in footprint footprint_full curing irq defmt_log; do
        read -r text data bss _ < <(arm-none-eabi-size "$(elf "$t" "$b")" | tail -1)
        echo "  $t $b: text $text, data $data, bss $bss"
        FIG[text_${b}_$t]=$text
        FIG[ram_${b}_$t]=$((data + bss))
    done
done

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
check hot_path_accept_m0 "${FIG[accept_$V6]:-}"
check hot_path_accept_m4f "${FIG[accept_$V7]:-}"
check hot_path_soft_float_m0 "${FIG[softfloat_$V6]:-}"
check step_on_reading_m0 "${FIG[step_$V6]:-}"
check step_on_reading_m4f "${FIG[step_$V7]:-}"
check flash_pipeline_controller_m0 "${FIG[text_footprint_$V6]:-}"
check flash_full_curing_m0 "${FIG[text_footprint_full_$V6]:-}"
check ram_session_state_m0 "${FIG[session_state_$V6]:-}"
check ram_static_footprint_m0 "${FIG[ram_footprint_$V6]:-}"
check stack_m0 "${FIG[stack_$V6]:-}"
check stack_m4f "${FIG[stack_$V7]:-}"
echo
echo "reported, no budget:"
printf '  %-40s %s\n' \
    "on_reading steady / at target, M0" "${FIG[step_steady_$V6]:-?} / ${FIG[step_target_$V6]:-?}" \
    "on_reading steady / at target, M4F" "${FIG[step_steady_$V7]:-?} / ${FIG[step_target_$V7]:-?}" \
    "accept on a range change, M0" "${FIG[range_change_$V6]:-?}" \
    "accept on a range change, M4F" "${FIG[range_change_$V7]:-?}" \
    "soft-float in hot path, M4F (f64 is software there too)" "${FIG[softfloat_$V7]:-?}" \
    "session state, M4F (bytes)" "${FIG[session_state_$V7]:-?}" \
    "text: footprint M4F" "${FIG[text_footprint_$V7]:-?}" \
    "text: curing example with checks+printing, M0 / M4F" "${FIG[text_curing_$V6]:-?} / ${FIG[text_curing_$V7]:-?}" \
    "text: irq example, M0 / M4F" "${FIG[text_irq_$V6]:-?} / ${FIG[text_irq_$V7]:-?}" \
    "text: defmt example, M0 / M4F" "${FIG[text_defmt_log_$V6]:-?} / ${FIG[text_defmt_log_$V7]:-?}" \
    "data+bss: curing / irq, M0" "${FIG[ram_curing_$V6]:-?} / ${FIG[ram_irq_$V6]:-?}" \
    "text: full curing firmware (journal + export), M4F" "${FIG[text_footprint_full_$V7]:-?}" \

echo
if [ "$failures" = 0 ]; then
    echo "firmware: all examples passed, every figure within its limit"
else
    echo "firmware: $failures failure(s)"
    exit 1
fi
