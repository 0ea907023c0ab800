Doubler on a bench supply with a noise injector the reader cannot model
* Invented for the report tests: VNOISE uses a waveform the reader does not
* understand, so it keeps only the DC value and says so (a reader warning);
* the doubler itself is checked as usual.
*@source VAC tol=10%
VAC    in  0   SIN(0 6 1k)
C1     in  a   1u
*@part C1 v_rated=50V kind=film
D1     0   a   DF
D2     a   out DF
C2     out 0   1u
*@part C2 v_rated=50V kind=film
RL     out 0   100k
VNOISE nz  0   TRNOISE(10m 1u 0 0)
RNZ    nz  0   1k
.model DF D(IS=1n N=1.8 BV=100)
.end
