# Reduced takeoff thrust by the assumed-temperature method (FAA AC 25-13),
# checked by hand on a small invented profile whose numbers make the
# arithmetic easy (thrustmap/testdata/handworked.toml).
profile ../thrustmap/testdata/handworked.toml
set alt 0 oat 10

# Ta at or below the OAT, or at or below the corner (ISA+15 = 30 °C): full.
set assumed 5
target takeoff
check value within 1e-9 of 90 + 5 * 10 / 30
set assumed 25
target takeoff
check value within 1e-9 of 90 + 5 * 10 / 30

# Ta 45: the table at 45 °C is 95 − 2·15/20 = 93.5; corrected N1 keeps
# N1/√θ, so × √(283.15/318.15).
set assumed 45
target takeoff
check value within 1e-9 of 93.5 * (283.15 / 318.15) ** 0.5

# Ta 60 would cut rated thrust to 70 kN, below 75 % of 100 kN (the 25 %
# limit of AC 25-13); thrust = 80 − (T − 50) on 50–70 °C meets 75 kN at
# T = 55: the table there is 92.5.
set assumed 60
target takeoff
check value within 1e-9 of 92.5 * (283.15 / 328.15) ** 0.5
# Above max_c (70) the same limit applies.
set assumed 80
target takeoff
check value within 1e-9 of 92.5 * (283.15 / 328.15) ** 0.5

# Test points from a CSV: rating, alt_ft, oat_c, mach, bleeds, assumed_c,
# expected, tol.
points handworked-points.csv
