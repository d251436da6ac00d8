"""Small curated inputs of the tests' own (not the demo's).

Diameters and well depths are the Svehla (1962) gas-phase Lennard-Jones values
as printed in Poling, Prausnitz & O'Connell, 5th ed., App. B (the `chemicals`
package's "Poling et al. (2001)" table); the OH values are Svehla's from
memory (uncertain). Rate numbers are made up for the tests.
"""

SPECIES_CSV = """name,formula,molar_mass_g_per_mol,diameter_angstrom,diameter_kind,well_depth_K,critical_temperature_K,critical_pressure_bar,boiling_volume_cm3_per_mol,source
OH,HO,,3.147,lennard-jones,79.8,,,,Svehla 1962 (from memory)
CH4,CH4,,3.758,lennard-jones,148.6,,,,Poling App. B
CH3,CH3,,,,,,,,
H2O,H2O,18.015,2.641,lennard-jones,809.1,,,,Poling App. B
HO2,HO2,,3.458,lennard-jones,107.4,,,,assumed like O2 for the tests
H2O2,H2O2,,,,,,,,
O2,O2,,3.467,lennard-jones,106.7,,,,Poling App. B
O3,O3,,,,,261.0,55.73,,Tc and Pc from the chemicals package
H,H,,,,,,,,
N2,N2,,3.798,lennard-jones,71.4,,,,Poling App. B
"""

REACTIONS_CSV = """key,equation,class,notes
oh-ch4,OH + CH4 -> CH3 + H2O,h-abstraction,
ho2-ho2,HO2 + HO2 -> H2O2 + O2,ho2-self,self-reaction
h-o2-m,H + O2 + M -> HO2 + M,recombination,third body
h2o2-dec,H2O2 -> OH + OH,decomposition,unimolecular
"""

MEASUREMENTS_CSV = """set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind,reference,method,pressure_bar,bath_gas
s1,oh-ch4,300,6.4e-15,cm3/molecule/s,0.1,relative,test lab A,flash photolysis,0.1,He
s1,oh-ch4,350,1.4e-14,cm3/molecule/s,0.1,relative,test lab A,flash photolysis,0.1,He
s1,oh-ch4,400,2.6e-14,cm3/molecule/s,0.1,relative,test lab A,flash photolysis,0.1,He
s2,CH4 + OH -> H2O + CH3,800,1.1e12,cm3/mol/s,1e11,absolute,test lab B,shock tube,1.5,Ar
s2,oh-ch4,1000,2.2e12,cm3/mol/s,2e11,absolute,test lab B,shock tube,1.5,Ar
"""

EXPRESSIONS_CSV = """reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference
ho2-ho2,,,-4.9,kJ/mol,,,,,test review
h2o2-dec,2.0e13,0,200,kJ/mol,s-1,800,1500,3,test review
oh-ch4,1.85e-20,2.82,987,K,cm3/molecule/s,200,2000,1.2,test review
"""

# Every rate-law form, for the tests of forms, efficiencies and rates (synthetic numbers;
# the shapes, not the values, are those of real reactions). Builds on SPECIES_CSV and
# REACTIONS_CSV above.
FORMS_SPECIES_CSV = """name,formula
CO,CO
CO2,CO2
C2H5,C2H5
C2H4,C2H4
Ar,Ar
"""

FORMS_REACTIONS_CSV = """key,equation,class
oh-co,OH + CO -> H + CO2,co-oxidation
c2h5-m,C2H5 + M -> C2H4 + H + M,decomposition
oh-oh-m,OH + OH + M -> H2O2 + M,recombination
"""

FORMS_EXPRESSIONS_CSV = """reaction,form,term,A,n,Ea,Ea_units,k_units,A_low,n_low,Ea_low,k_low_units,broadening,Fc,N,troe_alpha,troe_T3_K,troe_T1_K,troe_T2_K,T_min_K,T_max_K,reference
h-o2-m,falloff,,4.65e12,0.44,0,kJ/mol,cm3/mol/s,6.37e20,-1.72,2.19,,troe,,,0.5,30,90000,90000,300,2500,synthetic troe
oh-co,sum,1,1.5e-13,0,0,K,cm3/molecule/s,,,,,,,,,,,,200,400,synthetic sum
oh-co,sum,2,2.0e-12,0,1500,K,cm3/molecule/s,,,,,,,,,,,,300,2000,synthetic sum
c2h5-m,falloff,,1.1e13,0,167,kJ/mol,s-1,1.7e-6,0,139,cm3/molecule/s,fixed-fc,0.6,,,,,,700,1200,synthetic fixed fc
oh-oh-m,third-body,,6.9e-31,-0.8,0,kJ/mol,cm6/molecule2/s,,,,,,,,,,,,200,400,synthetic third body
"""

FORMS_EFFICIENCIES_CSV = """reaction,species,efficiency,source
h-o2-m,H2O,12,synthetic
h-o2-m,Ar,0.5,synthetic
oh-oh-m,H2O,6,synthetic
"""
