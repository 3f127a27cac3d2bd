"""Physical constants (CODATA 2018 exact values) and named shape factors."""

GAS_CONSTANT = 8.314462618  # R [J/(mol K)], exact since the 2019 SI redefinition
AVOGADRO = 6.02214076e23  # N_A [1/mol], exact

# Area of a bubble against a sphere of the same volume [-]
SHAPE_FACTORS = {
    "sphere": 1.0,
    # Kelvin's minimal tetrakaidecahedron; Princen and Levinson, J. Colloid Interface Sci. 120 (1987) 172
    "kelvin": 1.0970,
    # Weaire-Phelan structure; Weaire and Phelan, Phil. Mag. Lett. 69 (1994) 107
    "weaire_phelan": 1.0935,
}
