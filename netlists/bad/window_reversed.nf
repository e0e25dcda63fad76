# error 4:17: the window must end after it starts: '10 ms' is not after '20 ms'
# A window runs forward in time.
R1: resistor a -> gnd, 1 kohm
window 20 ms .. 10 ms
