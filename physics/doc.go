// Package physics groups the shared physics that several stages of the
// pipeline use: thermo (thermodynamic formulas and constants) and sun (solar
// position). Both quality control and analysis import them; they import no
// other package of the project's own.
package physics
