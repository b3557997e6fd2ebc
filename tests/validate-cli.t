#!/usr/bin/env bash
# One validation policy for spin-free input (lamina-stream(5), VALIDATION):
# every program that reads a spinfree stream gives the same verdict, with
# the same message, on the same input.  The operator must be Hermitian to
# 1e-12 of its largest |h_pq|, |(pq|rs)|; here that scale is |h_00| =
# 1.2528 Eh (H2, tests/data), so h_01 and h_10 1e-13 apart pass and 1e-11
# apart are refused by all.
source "$(dirname "$0")/lib/tap.sh"
lam lam-ints "$TESTS_DIR/data/h2-sto3g-r1.4bohr.fcidump" > "$TMP/h.op"

with_h01() { # with_h01 H01 H10 FILE: the H2 operator plus h_01 and h_10
    grep -v '^#% end' "$TMP/h.op" > "$3"
    printf '%s 0 1\n%s 1 0\n#%% end\n' "$1" "$2" >> "$3"
}
with_h01 0.2 0.2000000000001 "$TMP/inside.op"
with_h01 0.2 0.20000000001 "$TMP/outside.op"

# each program as a reader of one spinfree stream, its other needs met
run_reader() { # run_reader PROG FILE
    case $1 in
        lam-norm|lam-map|lam-sum|lam-factor|lam-shift) runlam "$1" "$2" ;;
        lam-range) runlam lam-range --electrons 2 "$2" ;;
        lam-rotate) runlam lam-rotate --starts 0 "$2" ;;
    esac
}
READERS="lam-norm lam-map lam-sum lam-range lam-factor lam-shift lam-rotate"

for p in $READERS; do
    run_reader "$p" "$TMP/inside.op"
    is "$RC" 0 "$p: h_01, h_10 1e-13 apart (inside 1e-12 x 1.2528): accepted"
done

run_reader lam-norm "$TMP/outside.op"
want=${ERR#lam-norm: }
like "$ERR" "^lam-norm: $TMP/outside.op: the operator is not Hermitian: term '0 1' has coefficient 0\.2(0000000000000001)? but '1 0' has 0\.2000000000100" \
     "lam-norm: h_01, h_10 1e-11 apart: the pair named"
for p in $READERS; do
    run_reader "$p" "$TMP/outside.op"
    is "$RC/${#OUT}" "65/0" "$p: h_01, h_10 1e-11 apart: exit 65, no output"
    is "$ERR" "$p: $want" "$p: the same message as every other reader"
done

# the real symmetry: Hermitian, (01|01) = (10|10) but (10|01) = 0
{ grep -v '^#% end' "$TMP/h.op"; printf '%s\n' '0.1 0 1 0 1' '0.1 1 0 1 0' '#% end'; } > "$TMP/nonreal.op"
for p in lam-factor lam-shift lam-rotate; do
    run_reader "$p" "$TMP/nonreal.op"
    is "$RC" 65 "$p: Hermitian without the 8-fold real symmetry: exit 65"
    like "$ERR" "^$p: $TMP/nonreal.op: the integrals lack the 8-fold symmetry of real orbitals \(largest violation 0\.2 Eh\); .* needs it\$" \
         "$p: the real symmetry's message names what needs it"
done
for p in lam-norm lam-map lam-sum lam-range; do
    run_reader "$p" "$TMP/nonreal.op"
    is "$RC" 0 "$p: Hermitian without the real symmetry: read (no closed form needed)"
done
runlam lam-norm "$TMP/nonreal.op"
is "$(report_get method <<<"$OUT")" majorana "lam-norm: without the real symmetry the Majorana expansion"
runlam lam-norm "$TMP/inside.op"
is "$(report_get method <<<"$OUT")" closed-form "lam-norm: an asymmetry inside the tolerance keeps the closed form"

done_testing
