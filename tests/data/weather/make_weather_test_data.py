#!/usr/bin/env python3
"""Writes the weather-reader test files in this directory.

ALL DATA ARE INVENTED: a made-up site with a symmetric 06:00-18:00 sun, a simple seasonal
swing and a cloudy day every seventh day. They describe no real place or measurement.

Run from this directory:  python3 make_weather_test_data.py
It prints a few (row -> value) pairs that the Rust unit tests check.
"""
import math

DAYS_IN_MONTH = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31]


def ghi(doy0, t_mid):
    """Invented hourly mean GHI, W/m2, for 0-based day of a 365-day year and mid-hour time."""
    if not (6.0 < t_mid < 18.0):
        return 0
    amp = 950.0 + 80.0 * math.cos(2 * math.pi * (doy0 - 10) / 365.0)
    cloud = 0.4 if doy0 % 7 == 3 else 1.0
    return int(round(amp * cloud * math.sin(math.pi * (t_mid - 6.0) / 12.0)))


def air(doy0, t_mid):
    """Invented air temperature, degC, rounded to 0.1."""
    v = 21.0 + 4.0 * math.cos(2 * math.pi * (doy0 - 10) / 365.0) \
        + 6.0 * math.sin(2 * math.pi * (t_mid - 9.0) / 24.0)
    return round(v, 1)


def hours_365():
    doy0 = 0
    for m, n in enumerate(DAYS_IN_MONTH, start=1):
        for d in range(1, n + 1):
            for h0 in range(24):
                yield doy0, m, d, h0
            doy0 += 1


EPW_HEADER = [
    "LOCATION,Invented Village,None,XX,INVENTED TEST DATA,000000,-12.50,34.00,2.0,1200.0",
    "DESIGN CONDITIONS,0",
    "TYPICAL/EXTREME PERIODS,0",
    "GROUND TEMPERATURES,0",
    "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0",
    "COMMENTS 1,All values in this file are invented for software tests (make_weather_test_data.py)",
    "COMMENTS 2,They describe no real place or measurement",
    "DATA PERIODS,1,1,Data,Tuesday,1/1,12/31",
]


def epw_row(year, m, d, h_end, db, g):
    # 35 fields; see EnergyPlus EPW data dictionary for the order. Unused fields hold
    # plain invented values.
    return (f"{year},{m},{d},{h_end},0,?,{db:.1f},{db - 8.0:.1f},60,88000,0,0,350,{g},0,0,"
            f"0,0,0,0,180,2.0,5,5,20,77777,9,999999999,20,0.1,0,88,0.2,0,1")


def write(name, lines):
    with open(name, "w", newline="\n") as f:
        f.write("\n".join(lines) + "\n")


def main():
    rows = []
    for doy0, m, d, h0 in hours_365():
        t = h0 + 0.5
        rows.append((m, d, h0 + 1, air(doy0, t), ghi(doy0, t)))
    epw = [epw_row(2019, m, d, h, db, g) for (m, d, h, db, g) in rows]
    write("invented_site.epw", EPW_HEADER + epw)
    for idx in (0, 12, 171 * 24 + 11, 8759):
        m, d, h, db, g = rows[idx]
        print(f"EPW index {idx}: {m}/{d} hour {h}: ghi {g}, air {db}")

    def broken(name, n_rows, edit=None):
        lines = list(epw[:n_rows])
        if edit:
            edit(lines)
        write(name, EPW_HEADER + lines)

    def drop_row(lines, i):
        del lines[i]

    def set_field(lines, i, field, value):
        f = lines[i].split(",")
        f[field] = value
        lines[i] = ",".join(f)

    # file line = 9 + row index
    broken("broken_gap.epw", 8, lambda l: drop_row(l, 4))                      # line 13
    broken("broken_missing_temperature.epw", 16, lambda l: set_field(l, 11, 6, "99.9"))  # line 20
    broken("broken_missing_ghi.epw", 16, lambda l: set_field(l, 12, 13, "9999"))  # line 21
    broken("broken_ghi_too_high.epw", 16, lambda l: set_field(l, 13, 13, "1600"))  # line 22
    broken("broken_not_number.epw", 10, lambda l: set_field(l, 6, 6, "warm"))   # line 15
    broken("broken_few_fields.epw", 5,
           lambda l: l.__setitem__(2, ",".join(l[2].split(",")[:8])))           # line 11
    broken("broken_short.epw", 48)                                               # lines 9-56

    # Two-year CSV, 2023 (common) and 2024 (leap: 29 Feb rows written with -59.0 degC
    # and must be dropped by the reader).
    csv = ["timestamp,ghi_w_per_m2,air_c"]
    for year in (2023, 2024):
        for doy0, m, d, h0 in hours_365():
            t = h0 + 0.5
            csv.append(f"{year:04d}-{m:02d}-{d:02d}T{h0:02d}:00,{ghi(doy0, t)},{air(doy0, t):.1f}")
            if year == 2024 and m == 2 and d == 28 and h0 == 23:
                for hh in range(24):
                    csv.append(f"2024-02-29T{hh:02d}:00,0,-59.0")
    write("invented_two_years.csv", csv)
    for year, idx in ((2023, 12), (2024, 1415), (2024, 1416), (2024, 8759)):
        doy0, h0 = divmod(idx, 24)
        print(f"CSV {year} index {idx}: ghi {ghi(doy0, h0 + 0.5)}, air {air(doy0, h0 + 0.5)}")

    head = "timestamp,ghi_w_per_m2,air_c"
    base = csv[1:40]  # 2023 rows; file line = 2 + row index
    write("broken_header.csv", ["time,ghi,temp"] + base[:5])
    write("broken_out_of_order.csv", [head] + base[:4] + base[5:8])              # line 6
    neg = list(base[:10]); f = neg[7].split(","); f[1] = "-5"; neg[7] = ",".join(f)
    write("broken_negative_ghi.csv", [head] + neg)                               # line 9
    hot = list(base[:5]); f = hot[2].split(","); f[2] = "61.0"; hot[2] = ",".join(f)
    write("broken_hot_air.csv", [head] + hot)                                    # line 4
    ts = list(base[:5]); f = ts[1].split(","); f[0] = "2023/01/01 01:00"; ts[1] = ",".join(f)
    write("broken_timestamp.csv", [head] + ts)                                   # line 3
    write("broken_short.csv", [head] + base[:30])                                # lines 2-31


if __name__ == "__main__":
    main()
