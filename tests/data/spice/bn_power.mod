* Brindlecoil Magnetics - power and wirewound inductor models
* INVENTED EXAMPLE DATA for partsel's tests: no real maker or part.
* Eddy-current loss as a coupled secondary loop (K); skin effect as a
* ladder of R-L sections.

.subckt BNL4040-101D-00B2C1 1 2
L1 1 3 10u
R1 3 2 45m
Cp 1 2 4.2p
Rp 1 2 18k
* secondary loop for the core loss, tied to pin 2
L2 4 2 3u
R2 4 2 12
K1 L1 L2 0.35
.ends

.SUBCKT BNW1008_682CJ_00B2C2 1 2 PARAMS: L=6.8u RDC=0.9 FSK=2meg
X1 1 3 BNSKIN rr={RDC} ll={L*0.9}
X2 3 4 BNSKIN rr={RDC*2} ll={L*0.1}
R0 4 2 {RDC/10}
C0 1 2 {1/((2*3.141592653589793*90meg)**2*L)}
.ENDS

.SUBCKT BNSKIN a b rr=1 ll=1u
L1 a b {ll}
R1 a c {rr}
L2 c b {ll/20}
.ENDS BNSKIN

* multilayer: a local .param, ^ and ** (left to right, as ngspice)
.subckt BNM0603_470F_00B2C3 1 2
.param lnom=47n q0=40 f0=100meg
L1 1 3 {lnom}
R1 3 2 {2*3.141592653589793*f0*lnom/q0}
C1 1 2 {1/(4*3.141592653589793^2*(1.2e9)**2*lnom)}
Rp 1 2 {2^2^3 * 10}
.ends

* m= parallel copies of a winding section
.subckt BNL6060-220S-00B2C4 1 2
X1 1 2 BNWIND m=2
.ends
.subckt BNWIND a b
La a c 44u
Ra c b 30m
Cw a b 3p
Rw a b 40k
.ends
