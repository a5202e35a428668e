# Gate and lever checks on the demo profile with its built-in calibration.
profile demo
calibration demo
set alt 0 oat 15 mach 0 ground on

# Lever 1's calibration points sit on the gates.
lever 1 1218
check gate == "idle"
lever 1 2588
check gate == "climb"
lever 1 3199
check gate == "continuous"
lever 1 3880
check gate == "takeoff"

# Forward the command never falls as the lever moves up (docs/methods.md, Gate rules).
tla 20
let a = value
tla 30
check value >= a
let a = value
tla 45
check value >= a

# Reduced takeoff is its own gate, active on the ground with an assumed
# temperature set, and commands the assumed-temperature value.
set assumed 45
tla 47
check gate == "reduced-takeoff"
check value within 1e-9 of max(assumed('takeoff'), rating('continuous'))
set ground off
tla 47
check gate == ""

# Reverse selected in the air is interlocked at idle; on the ground it works.
tla -10
check reverse
check value within 1e-9 of rating('idle')
set ground on
tla -10
check reverse && value > rating('idle')

# Expected errors.
expect-error "unknown rating" target max-climb
expect-error "lever 7 is not in calibration" lever 7 2000
