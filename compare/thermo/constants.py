"""Physical constants used across the thermodynamic core (SI).

Sources: CODATA 2018 exact values (R, N_A, e, k_B); IAPWS-95 molar mass of water; TEOS-10 (IOC, SCOR and IAPSO 2010,
"The international thermodynamic equation of seawater - 2010", eq. 2.9.1 ff.) for the mean molar mass of sea salt of
Reference Composition; IUPAC 2013 standard atomic weights for NaCl.
"""

R = 8.314462618          # molar gas constant [J/(mol K)], CODATA 2018
N_A = 6.02214076e23      # Avogadro constant [1/mol]
E_CHARGE = 1.602176634e-19   # elementary charge [C]
K_B = 1.380649e-23       # Boltzmann constant [J/K]
EPS_0 = 8.8541878128e-12  # vacuum permittivity [F/m], CODATA 2018
M_W = 0.018015268        # molar mass of water [kg/mol], IAPWS-95
M_SEA_SALT = 0.0314038218  # mean molar mass of sea salt particles, Reference Composition [kg/mol], TEOS-10
M_NACL = 0.05844277      # molar mass of NaCl [kg/mol] (22.98977 + 35.45300)
T0_C = 273.15            # 0 degC [K]
P_ATM = 101325.0         # standard atmosphere [Pa]
J_PER_KWH = 3.6e6        # [J/kWh]
