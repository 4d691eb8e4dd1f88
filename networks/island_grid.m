function mpc = island_grid
% An invented 7-bus island grid for demonstrations (not a real system): two generating
% plants (buses 1 and 6), a 132/33 kV transformer to a feeder, a double circuit between
% buses 2 and 3, and a radial spur to bus 7. Plain-text case format (version 2): bus,
% generator and branch tables; reactances in per unit on a 100 MVA base.
mpc.version = '2';
mpc.baseMVA = 100;

%% bus data
%	bus_i	type	Pd	Qd	Gs	Bs	area	Vm	Va	baseKV	zone	Vmax	Vmin
mpc.bus = [
	1	3	0	0	0	0	1	1	0	132	1	1.1	0.9;
	2	1	40	10	0	0	1	1	0	132	1	1.1	0.9;
	3	1	30	8	0	0	1	1	0	132	1	1.1	0.9;
	4	1	25	5	0	0	1	1	0	132	1	1.1	0.9;
	5	1	20	4	0	0	1	1	0	33	1	1.1	0.9;
	6	2	0	0	0	0	1	1	0	132	1	1.1	0.9;
	7	1	10	2	0	0	1	1	0	33	1	1.1	0.9;
];

%% generator data
%	bus	Pg	Qg	Qmax	Qmin	Vg	mBase	status	Pmax	Pmin
mpc.gen = [
	1	80	0	50	-50	1	100	1	120	0;
	6	50	0	30	-30	1	100	1	60	0;
];

%% branch data
%	fbus	tbus	r	x	b	rateA	rateB	rateC	ratio	angle	status	angmin	angmax
mpc.branch = [
	1	2	0.01	0.08	0	100	100	100	0	0	1	-360	360;
	2	3	0.02	0.12	0	80	80	80	0	0	1	-360	360;
	2	3	0.02	0.12	0	80	80	80	0	0	1	-360	360;
	3	4	0.01	0.10	0	80	80	80	0	0	1	-360	360;
	4	6	0.01	0.09	0	80	80	80	0	0	1	-360	360;
	1	6	0.02	0.15	0	80	80	80	0	0	1	-360	360;
	4	5	0.00	0.20	0	40	40	40	1.02	0	1	-360	360;
	5	7	0.03	0.25	0	20	20	20	0	0	1	-360	360;
];
