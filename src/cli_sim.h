/* cli_sim.h: the `headroom sim` command (part of the program, not of the
 * library): its own options, the run, the CSV out, the exit code. */
#ifndef HEADROOM_CLI_SIM_H
#define HEADROOM_CLI_SIM_H

/* argv[0] is "sim". Returns the exit status: 0 ok, 2 usage or netlist
 * error, 3 the solver failed. */
int cli_sim(int argc, char **argv);

#endif
