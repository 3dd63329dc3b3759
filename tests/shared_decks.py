"""Small decks that several test files build on; each adds its own cases."""

# a mass of 1000 t on a massless axial bar (NPS 6 Sch 40 pipe, 2 m long): one degree of freedom,
# ux of B, with k = E A / L and its one mode
BAR_SDOF = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
member M : A -> B truss P S
support A pinned
support B (uy, uz)
mass B = 1000 t
case MODES modes { count = 1 }
"""

# a one-member cantilever with a static and a modes case: fast enough for many runs
TINY_CANTILEVER = """title "tiny cantilever"
material ST { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 100 mm, wall = 5 mm)
node A = (0, 0, 0)
node B = (0, 0, 2 m)
member M1 : A -> B beam P ST
support A fixed
case LOAD static { force B = (1 kN, 0, 0) }
case MODES modes { count = 2 }
"""

# a cantilever pipe with an arm and a 400 kg head mass (our own scenario); each file adds its
# modes count and cases
PIPE_ARM = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
node H = (1.5 m, 0, 6 m)
member ARM : N4 -> H beam P S
support N0 fixed
mass H = 400 kg
"""

# two masses in series on springs between nodes: 800 kg on a 4 MN/m mount (SLAB), 300 kg on a
# 1 MN/m isolator (ISO) above it, vertical motion only; a two-degree-of-freedom system
ISOLATED_PAIR = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node G = (0, 0, 0)
node F = (1 m, 0, 0)
node A = (0, 0, 0.5 m)
node B = (0, 0, 1 m)
member FLOOR : G -> F beam P S
support G fixed
support F fixed
support A (ux, uy, rx, ry, rz)
support B (ux, uy, rx, ry, rz)
spring SLAB: G -> A (uz = 4 MN/m)
spring ISO: A -> B (uz = 1 MN/m)
mass A = 800 kg
mass B = 300 kg
case MODES modes { count = 2 }
"""

# a pinned column foot B under a portal (column COL, beam BM to a fixed support G) and a node F
# 0.8 m out from the foot carrying an 800 kg counterweight; the files that use it join F to B
# (a rigid link, a mass off the node or a stiff member H/Q) and add their cases
COUNTERWEIGHT_FRAME = """
material ST { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
material H { E = 210 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.1 mm)
section Q = generic(A = 1 m^2, Iy = 1 m^4, Iz = 1 m^4, J = 1 m^4)
node B = (0, 0, 0)
node T = (0, 0, 3 m)
node F = (0.8 m, 0, 0)
node G = (3 m, 0, 3 m)
member COL : B -> T beam P ST
member BM : T -> G beam P ST
support B pinned
support G fixed
mass F = 800 kg
"""

# a 400 kg machine on an isolator above a rigidly supported base node (vertical only): one DOF,
# k = 250 kN/m, f = sqrt(k/m)/2pi = 3.979 Hz. A massless floor member keeps the model a frame.
ISOLATED_SDOF = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node G = (0, 0, 0)
node F = (1 m, 0, 0)
node A = (0, 0, 0)
member FLOOR : G -> F beam P S
support G fixed
support F fixed
support A (ux, uy, rx, ry, rz)
spring ISO: G -> A (uz = 250 kN/m)
mass A = 400 kg
"""

# a 1.8 m steel cantilever in six elements whose depth is the parameter h (the studies' model)
STUDY_CANTILEVER = """
let h = 100 mm
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section R = rect(b = 100 mm, h = h)
for i in 0..6 { node N[i] = (i*0.3 m, 0, 0) }
for i in 0..5 { member M[i] : N[i] -> N[i+1] beam R S }
support N0 fixed
case MODES modes { count = 3 }
"""

# a cantilever 2 m long of a b x h rectangle, b = 100 mm across (local y = global Y), depth h
# along Z, in 20 elements: the bending frequency in the plane of h grows as h (Euler-Bernoulli:
# f ~ sqrt(E I / (rho A)) ~ h), the other does not depend on h, so the two bending planes'
# frequencies pass each other as h passes b; the files that use it add the modes case
CROSSING_CANTILEVER = """
let h = 100 mm
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section R = rect(b = 100 mm, h = h)
for i in 0..20 { node N[i] = (i*0.1 m, 0, 0) }
for i in 0..19 { member M[i] : N[i] -> N[i+1] beam R S }
support N0 fixed
"""

# a 6 m column fixed at A with 2 t at B (3 m) and 1 t at C (6 m), 120 x 200 mm: two lateral
# modes in each plane; the files that use it write the material and add the cases
TWO_MASS_COLUMN = """
section P = rect(b = 120 mm, h = 200 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (0, 0, 6 m)
member M1 : A -> B beam P S
member M2 : B -> C beam P S
support A fixed
mass B = 2 t
mass C = 1 t
"""
