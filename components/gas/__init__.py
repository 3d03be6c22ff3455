"""Pure-numpy working-gas properties (NASA 7-coefficient polynomials) and compressible-flow functions."""
