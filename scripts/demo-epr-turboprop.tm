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
