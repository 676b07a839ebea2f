/**
 * The built-in examples that `ordo init --example NAME` copies from cases/.
 *
 * @module
 */

/** The built-in examples: name → file in cases/ and what it shows. */
export const EXAMPLES: Record<string, { file: string; about: string }> = {
  "two-level": {
    file: "two_level.toml",
    about: "detuned two-level system, constant coupling (smallest complete case)",
  },
  "leaky-transmon": {
    file: "leaky_transmon.toml",
    about: "driven four-level anharmonic mode, leakage under a Gaussian pulse (the demo)",
  },
  ladder: {
    file: "ladder.toml",
    about: "three-level ladder, two-photon transition through a detuned middle level",
  },
  band: {
    file: "band_decay.toml",
    about: "a level decaying into a band of states (golden rule)",
  },
  crossing: { file: "swept_crossing.toml", about: "swept avoided crossing" },
  oscillator: {
    file: "kicked_oscillator.toml",
    about: "driven truncated oscillator",
  },
  crosstalk: {
    file: "qubit_chain_crosstalk.toml",
    about: "an idle chain of ten qubits, d = 1024: crosstalk by residual exchange, sparse operators",
  },
  gate: {
    file: "gate_on_mode.toml",
    about: "a π/2 gate on a three-level mode: fidelity, leakage, Magnus vs Dyson per order",
  },
  check: {
    file: "weak_drive_check.toml",
    about: "a sweep with [[approx]] formulas for `ordo check`",
  },
};
