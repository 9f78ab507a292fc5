"""Parts from stock: resistor networks (series, parallel, mixed shapes) and capacitor options the
drawer can make, counts respected, and their realisation for a design (CP-SAT)."""
