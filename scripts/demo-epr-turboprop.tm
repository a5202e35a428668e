# The EPR-rated and torque-rated demo profiles (invented data).
profile demo-epr
set alt 0 oat 15 mach 0.2
# Forward EPR targets are at least 1.0 (a pressure ratio below one is no thrust).
check rating('idle') >= 1.0
check rating('takeoff') >= rating('go-around') && rating('go-around') >= rating('continuous')
# EPR is a corrected parameter: flat below the corner.
set oat 0
let epr_0 = rating('takeoff')
set oat 20
check rating('takeoff') within 0.005 of epr_0

profile demo-turboprop
set alt 0 oat 15
# Flat-rated torque: 100 % up to ISA+15, falling past it.
check rating('takeoff') within 0.5 of 100
set oat 40
check rating('takeoff') < 100
check rating('takeoff') >= rating('continuous')

# The EPR demo's lever: full reverse at its own aft stop (−25°), and one
# forward gate that is takeoff on the ground, reduced inside the gate when an
# assumed temperature is set, and go-around in the air.
profile demo-epr
calibration demo-epr
set alt 0 oat 15 mach 0 ground on
tla -25
check gate == "full-reverse" && reverse
check value within 1e-9 of 1.35
tla 60
check gate == "full-forward"
check value within 1e-9 of rating('takeoff')
set assumed 45
tla 60
check value within 1e-9 of max(assumed('takeoff'), rating('continuous'))
check value < rating('takeoff')
set ground off
tla 60
check value within 1e-9 of rating('go-around')

# Above 12 000 ft the turboprop is temperature limited below its torque limit,
# so the available torque rises as it gets colder and the corner moves colder
# with altitude: at 20 000 ft (ISA −24.624 °C) the corner is ISA+5, so ISA+0
# is at the limit and ISA+10 is the table's 92.3 (100 · e^(−0.016 · 5),
# docs in the profile).
profile demo-turboprop
set alt 20000 oat -24.624 mach 0 ground off
check rating('takeoff') within 1e-9 of 100
set oat -14.624
check rating('takeoff') within 1e-9 of 92.3
check rating('takeoff') within 0.05 of 100 * 2.718281828459045 ** (-0.016 * 5)
