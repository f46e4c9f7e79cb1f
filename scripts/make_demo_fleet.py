#!/usr/bin/env python3
"""Write the invented demo fleet as TLEs (scenarios/demo-fleet.tle).

Every satellite, catalog number and element here is made up for the demo: the
operator "Kestrel Ridge Space Lab" does not exist. The script only formats
fields and computes the mod-10 checksum; mean motion comes from Kepler's third
law with the WGS-72 gravitational parameter (398600.8 km^3/s^2), which is close
enough for invented elements.
"""
import math

MU_KM3_S2 = 398600.8
RE_KM = 6378.135


def checksum(line: str) -> int:
    total = 0
    for ch in line[:68]:
        if ch.isdigit():
            total += int(ch)
        elif ch == "-":
            total += 1
    return total % 10


def exp_field(value: float) -> str:
    """TLE 'assumed decimal point' exponent field, 8 columns: ' 12345-3'."""
    if value == 0.0:
        return " 00000-0"
    sign = "-" if value < 0 else " "
    v = abs(value)
    exp = math.floor(math.log10(v)) + 1
    mant = v / 10 ** exp
    m = int(round(mant * 1e5))
    if m >= 100000:
        m //= 10
        exp += 1
    esign = "-" if exp < 0 else "+"
    return f"{sign}{m:05d}{esign}{abs(exp):d}"


def tle(name, catno, intl, epoch_yyddd, ndot, bstar, inc, raan, ecc, argp, ma, n, rev, elset=999):
    l1 = (f"1 {catno:05d}U {intl:<8s} {epoch_yyddd:014.8f} "
          f"{'-' if ndot < 0 else ' '}{('%.8f' % abs(ndot))[1:]} {exp_field(0.0)} {exp_field(bstar)} 0 {elset:4d}")
    l2 = (f"2 {catno:05d} {inc:8.4f} {raan:8.4f} {('%.7f' % ecc)[2:]} {argp:8.4f} {ma:8.4f} {n:11.8f}{rev:5d}")
    assert len(l1) == 68 and len(l2) == 68, (len(l1), len(l2), l1, l2)
    l1 += str(checksum(l1))
    l2 += str(checksum(l2))
    return f"{name}\n{l1}\n{l2}\n"


def mean_motion(perigee_alt_km, apogee_alt_km):
    a = RE_KM + (perigee_alt_km + apogee_alt_km) / 2.0
    n_rad_s = math.sqrt(MU_KM3_S2 / a ** 3)
    return n_rad_s * 86400.0 / (2 * math.pi), (apogee_alt_km - perigee_alt_km) / (2 * a)


# Epoch 2026-12-01 00:00 UTC is day-of-year 335.0.
EPOCH = 26335.0
fleet = [
    # name, catno, intl, epoch offset (days), bstar, inc, raan, perigee km, apogee km, argp, ma, rev
    ("KRSL-1 ORMIVEL", 90001, "26901A", 0.21354167, 2.1e-4, 97.4021, 45.1200, 498.0, 512.0, 88.1, 272.0, 1234),
    ("KRSL-2 BREVANDT", 90002, "26901B", 0.22100000, 2.4e-4, 97.4033, 45.3100, 497.0, 511.0, 91.4, 250.0, 1233),
    ("KRSL-3 LUNNOCK", 90003, "26902A", 0.40312500, 1.6e-4, 97.5712, 312.4400, 541.0, 556.0, 120.7, 239.5, 871),
    ("KRSL-4 QUELLAND", 90004, "26902B", 0.37500000, 1.7e-4, 97.5698, 132.7000, 545.0, 553.0, 10.2, 349.8, 869),
    ("KRSL-5 FIRTHEN", 90005, "26903A", 0.16666667, 3.9e-4, 51.6204, 201.3300, 418.0, 426.0, 33.0, 327.1, 402),
    ("KRSL-6 TASSOREL", 90006, "26904A", 0.08333333, 9.0e-5, 63.4000, 77.7000, 350.0, 2400.0, 270.0, 15.0, 211),
]

out = []
for name, catno, intl, off, bstar, inc, raan, hp, ha, argp, ma, rev in fleet:
    n, e = mean_motion(hp, ha)
    out.append(tle(name, catno, intl, EPOCH + off, 0.00001234 if hp < 450 else 0.00000876, bstar,
                   inc, raan, e, argp, ma, n, rev))

if __name__ == "__main__":
    import pathlib
    path = pathlib.Path(__file__).resolve().parent.parent / "scenarios" / "demo-fleet.tle"
    path.write_text("".join(out))
    print("".join(out), end="")
