# group-fcidump.awk - a synthetic FCIDUMP for the lam-group benchmark.
#   awk -v n=20 -f bench/group-fcidump.awk > syn20.fcidump
# Every integral allowed by the 8-fold symmetry of real orbitals is present;
# values are pseudo-random (fixed seed) and fall off with the orbital
# distance the way localized-orbital integrals do, so that coefficient
# magnitudes spread over several decades as in a molecule.
function dist(a, b) { return a > b ? a - b : b - a }
function val(scale, d) { return scale * (rand() - 0.5) * exp(-0.35 * d) }
BEGIN {
    srand(n + 12345)
    printf " &FCI NORB=%d,NELEC=%d,MS2=0,\n  ORBSYM=", n, n
    for (i = 1; i <= n; i++) printf "1,"
    printf "\n  ISYM=1,\n &END\n"
    for (i = 1; i <= n; i++)
        for (j = 1; j <= i; j++)
            for (k = 1; k <= i; k++)
                for (l = 1; l <= (k == i ? j : k); l++) {
                    d = dist(i, j) + dist(k, l) + dist(i, k) / 2
                    v = (i == j && k == l) ? 0.4 + 0.2 * rand() : val(0.2, d)
                    printf "%.12e %d %d %d %d\n", v, i, j, k, l
                }
    for (i = 1; i <= n; i++)
        for (j = 1; j <= i; j++)
            printf "%.12e %d %d 0 0\n", i == j ? -2.0 + 0.05 * i : val(0.3, dist(i, j)), i, j
    printf "%.12e 0 0 0 0\n", 10.0
}
