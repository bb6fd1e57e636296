//! The schema fingerprint: a hash of a text description of every message layout.
//!
//! Whoever changes a message type changes [`SCHEMA`] with it (the golden-byte tests fail until
//! the description, the fingerprint and the vectors agree), so two builds with different
//! layouts refuse each other at the handshake instead of misreading samples.

/// Field-by-field description of the wire layout.
pub const SCHEMA: &str = "\
DeviceMsg{Hello(DeviceHello),Sample(Sample),Beacon(Beacon),State(StateReport),Fault(FaultReport),Ack(Ack),Refused(Refusal)}
DeviceHello{version:Version,firmware:[u8;3],board:Label,sensors:SensorSetup,limits:SafetyLimits,heater:HeaterDrive,boot:BootReport,latched:Option<Fault>}
HeaterDrive{Pwm{u16},TimeProportioning{u16,u16}}
BootReport{reset:ResetCause{PowerOn,Watchdog,Panic,HardFault},last_fault:Option<Fault>,locked:bool}
Version{protocol:u16,schema:u32}
SensorSetup{hall_full_scale_uv:u32,probe_full_scale_uv:u32,supply_mv:u16,ntc_series_ohm:u32,thermo:ThermoKind{TypeKLinear},period_ms:u16,oversample:u8}
SafetyLimits{ceiling_tenth_c:i16,heartbeat_timeout_ms:u16,max_rise_tenth_c_per_s:u16,response_window_s:u16,reset_margin_tenth_c:i16,duty_cap_pct:u8}
Sample{seq_lo:u8,status:u8,hall_code:i16le,probe_code:i16le,thermo:u32be,duty:u8}
Beacon{seq:u32,epoch_seq:u32,epoch_ms:u32,period_ms:u16,dropped_total:u32,state:RunState,setpoint_tenth_c:i16}
RunState{Idle,Profile,Manual,Faulted}
StateReport{time_ms:u32,state:RunState,segment:u8}
FaultReport{time_ms:u32,fault:Fault,temp_tenth_c:i16}
Fault{ThermocoupleOpen,ThermocoupleShortGnd,ThermocoupleShortVcc,OverTemperature,RiseTooFast,StuckReading,NoHeatingResponse,HeartbeatLost,SensorBus,Injected,ConverterImplausible,HeatingWhileOff,HeaterDrive,Watchdog,Crashed}
Ack{id:u16}
Refusal{id:u16,reason:RefuseReason{VersionMismatch(Version),HandshakeRequired,AboveCeiling{i16},AboveRunLimit{i16},FaultLatched(Fault),TooHotToClear{i16,i16},NoFaultLatched,Invalid,Busy,LockedOut{u8},TooFastForBoard{u16},Unsupported}}
HostMsg{id:u16,command:Command}
Command{Hello(Version),Start(Profile),Stop,Manual{i16,i16},Heartbeat,Configure(SamplingConfig),ClearFault,InjectFault,Drill(Drill{Panic,Hang,StackOverflow}),Fixture(FixtureModel),Duty{u8,i16}}
FixtureModel{rate_mk_per_s:u32,cooling_tau_s:u32,lag_ms:u32,rate_fall_ppm_per_k:u32}
SamplingConfig{period_ms:u16,oversample:u8}
Profile{limit_tenth_c:i16,segments:[Segment;..16]}
Segment{target_tenth_c:i16,ramp_tenth_c_per_min:u16,hold_s:u32}
";

/// FNV-1a (32-bit) of [`SCHEMA`].
pub const SCHEMA_FINGERPRINT: u32 = fnv1a(SCHEMA.as_bytes());

/// FNV-1a, 32-bit (offset basis 2166136261, prime 16777619).
pub const fn fnv1a(bytes: &[u8]) -> u32 {
    let mut hash: u32 = 0x811c_9dc5;
    let mut i = 0;
    while i < bytes.len() {
        hash ^= bytes[i] as u32;
        hash = hash.wrapping_mul(0x0100_0193);
        i += 1;
    }
    hash
}

#[cfg(test)]
mod tests {
    use super::fnv1a;

    #[test]
    fn fnv1a_matches_published_test_vectors() {
        // Test vectors from the FNV reference page (Fowler, Noll, Vo; IETF draft
        // draft-eastlake-fnv): "" → 0x811c9dc5, "a" → 0xe40c292c, "foobar" → 0xbf9cf968.
        assert_eq!(fnv1a(b""), 0x811c_9dc5);
        assert_eq!(fnv1a(b"a"), 0xe40c_292c);
        assert_eq!(fnv1a(b"foobar"), 0xbf9c_f968);
    }
}
