// Package thrustmap computes rated engine targets for simulated turbine
// aircraft.
package thrustmap
