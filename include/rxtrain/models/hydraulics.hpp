// The pressure drop of a packed bed, written once: Ergun's equation
// (Ergun, Chem. Eng. Prog. 48 (1952) 89-94) and the pellet's equivalent
// diameter it is written on. SI: Pa, m, kg/(m2 s), Pa s, kg/m3.
#pragma once

#include "rxtrain/case/bed_spec.hpp"
#include "rxtrain/kinetics/pellet_spec.hpp"
#include "rxtrain/models/pellet.hpp"

namespace rxtrain {

// The constants of Ergun (1952): the viscous and the inertial term.
inline constexpr double kErgunViscous = 150.0;
inline constexpr double kErgunInertial = 1.75;

// d_p = 6 V_p / S_p over the pellet's whole surface: a sphere's d, a
// cylinder's 3 d L / (2 L + d) (1.5 d when infinite), a slab's 3 t.
inline double particle_diameter(const PelletSpec& p) {
  return 6.0 * pellet_length_scale(p.shape, p.size, p.length);
}

// dP/dz = -(G / (rho d_p)) ((1 - eps) / eps^3) [150 (1 - eps) mu / d_p + 1.75 G]
// (Pa/m, <= 0), G the superficial mass flux.
inline double ergun_gradient(double G, double rho, double mu, double d_p, double eps) {
  const double bracket = kErgunViscous * (1 - eps) * mu / d_p + kErgunInertial * G;
  return -(G / (rho * d_p)) * ((1 - eps) / (eps * eps * eps)) * bracket;
}

// The particle Reynolds number of Ergun's correlation, G d_p / mu (no
// (1 - eps) factor).
inline double particle_reynolds(double G, double d_p, double mu) { return G * d_p / mu; }

}  // namespace rxtrain
