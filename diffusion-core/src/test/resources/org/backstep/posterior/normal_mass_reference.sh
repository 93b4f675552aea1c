#!/bin/sh
# Reference values for DiscretizedGaussianTest, computed independently of the Java code with mpmath
# (Debian's python3-mpmath, installed here with apt-get if missing) at a working precision of 2000
# digits, so that Phi(b) - Phi(a) keeps its digits even where both are within 1e-800 of 1:
#
#   log_cdf  x        log Phi(x)
#   log_mass a b      log(Phi(b) - Phi(a)), a < b standardized bin edges (inf allowed)
#
# Phi is mpmath.ncdf. Every x, a, b is turned into the double that Java's Double.parseDouble makes
# of the same text and used exactly; results are printed with 17 significant digits (the nearest
# double round-trips).
#
# Run from this folder:  sh normal_mass_reference.sh > normal-mass-reference.txt
set -e
echo "kernel $(uname -sr), $(/usr/bin/python3 --version 2>&1)" >&2
if ! /usr/bin/python3 -c 'import mpmath' 2>/dev/null; then
    apt-get install -y python3-mpmath >&2
fi
exec /usr/bin/python3 - <<'PY'
import sys
import mpmath

mpmath.mp.dps = 2000

LOG_CDF = [-1e6, -1000.0, -100.0, -60.0, -40.0, -38.5, -37.0, -30.0, -25.0, -20.5, -20.0, -19.999,
           -19.5, -15.0, -10.0, -5.0, -2.0, -1.0, -0.1, -1e-8, 0.0, 1e-8, 0.1, 1.0, 2.0, 5.0, 8.0,
           10.0, 20.0, 40.0]

LOG_MASS = [
    ('-inf', '-60'), ('-inf', '-40'), ('-40.5', '-40'), ('-inf', '-38'), ('-38.5', '-37.5'),
    ('-21', '-19'), ('-20.5', '-20'), ('-20.25', '-19.75'), ('-10.5', '-9.5'), ('-3', '-2.5'),
    ('-1.001', '-1'), ('-1', '-0.999999'), ('-5.5', '-5'), ('-1e-3', '1e-3'), ('-1e-9', '1e-9'),
    ('-0.5', '0.5'), ('-2', '3'), ('-8', '8'), ('-12', '9'), ('-40', '40'), ('-inf', '0.3'),
    ('0.3', 'inf'), ('-inf', 'inf'), ('1', '1.001'), ('0.999999', '1'), ('2.5', '3'), ('7.9', '8.2'),
    ('9.5', '10.5'), ('19.5', '20.5'), ('37.5', '38.5'), ('40', '40.5'), ('40', 'inf'), ('60', 'inf'),
    ('0', '1e-12'), ('-1e-12', '0'), ('-0.25', '1e6'), ('-40.001', '-40'), ('-1000.0001', '-1000'),
    ('1000', '1000.0001'), ('-3.05', '-2.95'), ('5.98', '6.02'), ('-0.3', '-0.2'), ('39.9', '40.1'),
]


def value(text):
    return mpmath.mpf(float(text))   # the double Java parses, as an exact binary value


def fmt(x):
    return mpmath.nstr(x, 17, strip_zeros=False, min_fixed=-3, max_fixed=3)


def main():
    out = sys.stdout
    out.write('# log Phi and log(Phi(b) - Phi(a)) from mpmath %s at %d digits (normal_mass_reference.sh)\n'
              % (mpmath.__version__, mpmath.mp.dps))
    for x in LOG_CDF:
        out.write('log_cdf %r %s\n' % (x, fmt(mpmath.log(mpmath.ncdf(mpmath.mpf(x))))))
    for a, b in LOG_MASS:
        if value(a) >= 0:   # Phi(b) - Phi(a) = Phi(-a) - Phi(-b): both terms tiny, no digits lost far out
            mass = mpmath.ncdf(-value(a)) - mpmath.ncdf(-value(b))
        else:
            mass = mpmath.ncdf(value(b)) - mpmath.ncdf(value(a))
        out.write('log_mass %s %s %s\n' % (a, b, fmt(mpmath.log(mass))))


if __name__ == '__main__':
    main()
PY
