// Package control turns a fitted step response into the blocks a
// control-loop designer uses: the motor as a first-order-plus-dead-time
// transfer function K·e^{−θs}/(τs + 1), its zero-order-hold discrete
// equivalent at the loop rate (the fractional part of the delay handled by
// the modified z-transform), magnitude and phase lag at a chosen frequency,
// a first-order sensor low-pass filter, and a SIMC PI starting point.
//
// Sources: the ZOH equivalent of a first-order lag with a delay that is
// not a whole number of samples follows the modified z-transform treatment
// in G. F. Franklin, J. D. Powell, M. L. Workman, Digital Control of
// Dynamic Systems (3rd ed., Addison-Wesley 1998), chapter on discrete
// equivalents (cited from memory); it is derived again in the comment of
// Discretize and checked against a fine-step simulation in the tests.
// PI rules: S. Skogestad, "Simple analytic rules for model reduction and
// PID controller tuning", J. Process Control 13:291–309, 2003.
package control
