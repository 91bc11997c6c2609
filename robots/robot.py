"""The validated description of a leg: segments, joints, actuators, springs, ground.

Units are SI throughout (see the README, "Units and conventions"): metres, kilograms, seconds, radians, newton
metres, amperes, volts, ohms, kelvin per watt, degrees Celsius for temperatures.

Motor constants are stored in one internal convention, the *DC-equivalent motor*:

    torque  T = Kt * I                   [N m]      (I: the current the drive limits are set in)
    voltage V = R * I + Ke * w  <= V_max [V]        (w: motor shaft speed, rad/s)

with Kt [N m/A] and Ke [V s/rad] equal for an ideal motor. A three-phase motor under field-oriented
control maps onto this form exactly when I is the phase-peak q-axis current, Kt is per phase-peak
ampere, R = 1.5 R_phase and V_max = (sqrt(3)/2) V_bus with space-vector modulation (robots.motor_constants
does the conversion and documents it).
"""

from __future__ import annotations

from .reprs import short_repr

from dataclasses import dataclass, field

KNEE_BRANCHES = ("backward", "forward")

# Standard acceleration of gravity [m/s^2] (the conventional value adopted by the 3rd CGPM, 1901): the
# one value of g in legbridge (Pinocchio model, scaling of nondimensional plans, reports).
STANDARD_GRAVITY_M_S2 = 9.80665


@dataclass(frozen=True)
class Segment:
    """One rigid segment of the leg, ordered from hip to foot.

    length_m: proximal joint to distal joint (or foot contact point for the last segment) [m]
    com_m: centre of mass from the proximal joint, along the segment [m]
    inertia_kgm2: pitch inertia about the centre of mass [kg m^2]
    """

    name: str
    length_m: float
    mass_kg: float
    com_m: float
    inertia_kgm2: float


@dataclass(frozen=True)
class ThermalModel:
    """Winding thermal model, one node (winding to ambient) or two nodes (winding, housing).

    One node: C_w dT_w/dt = P - (T_w - T_amb) / R_w, tau_w = R_w C_w.
    Two nodes (when ``housing_resistance_k_per_w`` is set): R_w, tau_w are winding-to-housing,
    R_h, tau_h housing-to-ambient.
    The copper loss P = R(T_w) I^2 grows with the winding temperature:
    R(T) = R_ref (1 + alpha (T - T_ref)), alpha = ``resistance_temp_coefficient_per_k`` (copper
    0.00393 /K near 20-25 degC, common practice), T_ref = ``resistance_reference_temp_c`` (the
    temperature at which the file's winding resistance holds, datasheets usually give 25 degC).
    """

    winding_resistance_k_per_w: float
    winding_time_constant_s: float
    max_winding_temp_c: float
    ambient_temp_c: float
    housing_resistance_k_per_w: float | None = None
    housing_time_constant_s: float | None = None
    resistance_temp_coefficient_per_k: float = 0.00393
    resistance_reference_temp_c: float = 25.0

    def resistance_factor(self, temp_c):
        """R(T) / R_ref = 1 + alpha (T - T_ref) [-] at a winding temperature [degC] (array or float)."""
        return 1.0 + self.resistance_temp_coefficient_per_k * (temp_c - self.resistance_reference_temp_c)

    @property
    def two_node(self) -> bool:
        return self.housing_resistance_k_per_w is not None

    @property
    def total_resistance_k_per_w(self) -> float:
        """Winding-to-ambient resistance in steady state [K/W]."""
        return self.winding_resistance_k_per_w + (self.housing_resistance_k_per_w or 0.0)


@dataclass(frozen=True)
class Actuator:
    """Motor, drive and gearbox of one joint, in the internal DC-equivalent convention.

    gear_ratio: motor speed / joint speed [-]
    gearbox_efficiency: 0 < eta <= 1, applied by power direction (motoring: tau = eta N T_m;
        back-driven: tau = N T_m / eta)
    torque_constant_nm_per_a, back_emf_v_s_per_rad: Kt, Ke (DC-equivalent) [N m/A], [V s/rad]
    winding_resistance_ohm: DC-equivalent winding resistance [ohm]
    bus_voltage_v: supply bus voltage [V]; max_voltage_v: DC-equivalent voltage the drive can put
        across the winding (bus voltage times the modulation factor) [V]
    peak_current_a, continuous_current_a: drive current limits in the same current as Kt [A]
    rotor_inertia_kgm2: rotor inertia on the motor side [kg m^2]
    max_motor_speed_rad_s: mechanical motor speed limit [rad/s]
    """

    gear_ratio: float
    gearbox_efficiency: float
    torque_constant_nm_per_a: float
    back_emf_v_s_per_rad: float
    winding_resistance_ohm: float
    bus_voltage_v: float
    max_voltage_v: float
    peak_current_a: float
    continuous_current_a: float
    rotor_inertia_kgm2: float
    max_motor_speed_rad_s: float
    thermal: ThermalModel
    motor_type: str = "dc"
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Spring:
    """Series spring between motor side and joint side (series-elastic joint).

    stiffness_nm_per_rad [N m/rad], damping_nms_per_rad [N m s/rad]
    """

    stiffness_nm_per_rad: float
    damping_nms_per_rad: float = 0.0


@dataclass(frozen=True)
class Joint:
    """A pitch joint of the leg and its actuator; joint i moves segment i.

    lower_rad, upper_rad: hard stops [rad]
    velocity_limit_rad_s, effort_limit_nm: extra joint-side bounds (e.g. URDF ``<limit>``); the
        tighter of these and the actuator-derived values applies (see robots.actuator_limits);
        *_source says where each came from ('robot file' or 'URDF')
    """

    name: str
    lower_rad: float
    upper_rad: float
    actuator: Actuator
    spring: Spring | None = None
    velocity_limit_rad_s: float | None = None
    effort_limit_nm: float | None = None
    velocity_limit_source: str = "robot file"
    effort_limit_source: str = "robot file"


@dataclass(frozen=True)
class UrdfSource:
    """Where a URDF-described leg comes from: the file, the sagittal chain and locked joints.

    urdf_path: absolute path of the URDF file; sha256: its SHA-256 when loaded (hex)
    hip_link: the link the sagittal chain starts from (rigid with the body once joints are locked)
    foot_frame: the URDF link holding the foot; foot_offset_m: contact point in that link's frame [m]
    leg_joints: the sagittal chain, hip to foot; locked_joints: (name, value [rad or m]) of every
        other movable joint
    base_link: the URDF root link (the body)
    body_mass_kg, body_pitch_inertia_kgm2: values from the robot TOML that replace the URDF's body
        inertia (None: the body inertia is that of the links above the hip in the URDF)
    leg_chains: a biped's chains, one (leg, leg_joints, foot_link, foot_offset_m) per leg; () for
        one leg. leg_joints, foot_frame and foot_offset_m above are then the first (left) chain's
    leg_mass_kg: the mass of one leg's chain links [kg] (filled in by the reader)
    """

    urdf_path: str
    hip_link: str
    foot_frame: str
    leg_joints: tuple[str, ...]
    locked_joints: tuple[tuple[str, float], ...] = ()
    base_link: str | None = None
    foot_offset_m: tuple[float, float, float] = (0.0, 0.0, 0.0)
    body_mass_kg: float | None = None
    body_pitch_inertia_kgm2: float | None = None
    sha256: str = ""
    leg_chains: tuple = ()
    leg_mass_kg: float | None = None


@short_repr('name', 'legs', 'joints', 'segments', 'source')
@dataclass(frozen=True)
class Robot:
    """A validated leg description.

    body_mass_kg, body_pitch_inertia_kgm2: everything the leg carries (body, other leg, payload)
    knee: 'backward' (knee behind the hip-foot line, knee angle < 0) or 'forward'
    ground_friction: Coulomb friction coefficient of the test surface [-]
    hip_offset_m: hip joint centre relative to the body centre of mass, (x, z) [m]
    nominal_leg_length_m: l0 for scaling nondimensional plans, or None (then the plan must give it)
    foot_pitch_rad: three-joint legs only: the world pitch the last segment holds (the rule that
        resolves the redundancy in inverse kinematics); 0 = the last segment points straight down
    segments: hip to foot; empty for URDF legs (geometry then comes from the URDF)
    joints: hip, knee (and ankle), in chain order
    source, sha256: the description file and its SHA-256 (hex)
    warnings: non-fatal findings of the loader (e.g. Kt and Ke that disagree)
    legs: () for a one-leg description; ('left', 'right') for a biped whose two legs both follow
        this one leg description (both hips at the body's hip point in the sagittal model); the
        body mass then excludes both legs. Joints of a biped are named '<leg>_<joint>' (limb_joints)
    right_segments, right_joints: a biped's right leg when it differs from the description above
        (the left leg's); () = the right leg is the same. Same joint names and count as ``joints``.
    """

    name: str
    body_mass_kg: float
    body_pitch_inertia_kgm2: float
    knee: str
    ground_friction: float
    segments: tuple[Segment, ...]
    joints: tuple[Joint, ...]
    source: str = ""
    sha256: str = ""
    hip_offset_m: tuple[float, float] = (0.0, 0.0)
    nominal_leg_length_m: float | None = None
    foot_pitch_rad: float = 0.0
    urdf: UrdfSource | None = None
    warnings: tuple[str, ...] = field(default=(), compare=False)
    legs: tuple[str, ...] = ()
    right_segments: tuple[Segment, ...] = ()
    right_joints: tuple[Joint, ...] = ()

    def leg_description(self, leg: str) -> tuple[tuple[Segment, ...], tuple[Joint, ...]]:
        """(segments, joints) of one leg of a biped (joint names without the leg prefix)."""
        if leg == "right" and self.right_joints:
            return self.right_segments, self.right_joints
        return self.segments, self.joints

    def leg_robot(self, leg: str) -> "Robot":
        """A one-leg Robot of one leg of a biped (its own segments and joints, no legs)."""
        from dataclasses import replace

        segs, joints = self.leg_description(leg)
        return replace(self, segments=segs, joints=joints, legs=(), right_segments=(), right_joints=())

    @property
    def joint_names(self) -> tuple[str, ...]:
        return tuple(j.name for j in self.joints)

    @property
    def is_biped(self) -> bool:
        return len(self.legs) == 2

    @property
    def limb_joints(self) -> tuple[Joint, ...]:
        """Every actuated joint of the robot in trajectory order: the leg's joints for a one-leg
        description; each leg's copy, named '<leg>_<joint>', leg after leg, for a biped."""
        if not self.legs:
            return self.joints
        from dataclasses import replace

        return tuple(replace(j, name=f"{leg}_{j.name}") for leg in self.legs for j in self.leg_description(leg)[1])

    @property
    def limb_joint_names(self) -> tuple[str, ...]:
        return tuple(j.name for j in self.limb_joints)

    def joint(self, name: str) -> Joint:
        for j in self.joints:
            if j.name == name:
                return j
        for j in self.limb_joints if self.legs else ():
            if j.name == name:
                return j
        from .errors import LegbridgeError

        valid = list(self.joint_names) + (list(self.limb_joint_names) if self.legs else [])
        raise LegbridgeError(
            f"robot '{self.name}' has no joint '{name}'", expected=f"one of {valid}", found=name
        )

    @property
    def leg_mass_kg(self) -> float:
        """Mass of one leg [kg]: its segments, or a URDF leg's chain links."""
        if not self.segments and self.urdf is not None and self.urdf.leg_mass_kg is not None:
            return float(self.urdf.leg_mass_kg)
        return float(sum(s.mass_kg for s in self.segments))

    @property
    def total_mass_kg(self) -> float:
        """Body plus leg(s) [kg]: the mass a spring-mass plan of this robot should carry."""
        if self.legs and self.right_segments:
            return self.body_mass_kg + sum(s.mass_kg for leg in self.legs for s in self.leg_description(leg)[0])
        return self.body_mass_kg + self.leg_mass_kg * max(1, len(self.legs))
