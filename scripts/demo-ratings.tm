# Rating shape checks on the embedded demo twin turbofan (invented data).
# Run: thrustmap run scripts/*.tm
profile demo

# Common practice: at the same conditions takeoff ≥ go-around ≥ continuous ≥
# climb ≥ cruise ≥ idle.
set alt 0 oat 15 mach 0.2
check rating('takeoff') >= rating('go-around')
check rating('go-around') >= rating('continuous')
check rating('continuous') >= rating('climb')
check rating('climb') >= rating('cruise')
check rating('cruise') >= rating('idle')
set alt 8000 oat 25 mach 0.3
check rating('takeoff') >= rating('go-around') && rating('go-around') >= rating('continuous')
check rating('continuous') >= rating('climb') && rating('climb') >= rating('cruise')

# Flat rating (gas-turbine practice, e.g. Walsh & Fletcher): below the corner
# (ISA+15, 30 °C at sea level) rated thrust is flat and physical N1 rises about
# as √θ, so the corrected N1 = N1/√θ stays nearly constant.
set alt 0 oat 0
let corrected_0 = rating('takeoff') / ((oat + 273.15) / 288.15) ** 0.5
set oat 25
let corrected_25 = rating('takeoff') / ((oat + 273.15) / 288.15) ** 0.5
check corrected_25 within 0.01 * corrected_0 of corrected_0

# Past the corner the engine is temperature limited: N1 falls.
set oat 30
let at_corner = rating('takeoff')
set oat 45
check rating('takeoff') < at_corner

# Anti-ice takes bleed air: a lower target; packs off gives a little back.
set alt 2000 oat 10
let clean = rating('takeoff')
bleed engine-anti-ice on
check rating('takeoff') < clean
bleed engine-anti-ice off
bleed packs-off on
check rating('takeoff') > clean
bleed packs-off off

# The redline ([limits] max = 104) is never exceeded, whatever the bleeds.
bleed packs-off on
set alt -2000 oat -40
check rating('takeoff') <= 104

# Clamped look-ups are reported, not extrapolated: far above the table (its
# top row is 14000 ft; its columns are ISA deviations) the value is the top
# row's at the same ISA deviation.
set alt FL250 oat -35
target takeoff
check value within 1e-9 of rating_at('takeoff', 14000, isa_temp(14000) + isa_dev)
