//! Messages waiting for the link, in two queues so a flood of commands can never push a fault
//! or state report out: reports (faults, state changes) go first and are never dropped for a
//! reply; replies (hello, acks, refusals, beacons) drop their oldest when full.

use heapless::{Deque, Vec};
use remanent_protocol::DeviceMsg;

/// Replies held for the link.
pub const REPLIES_LEN: usize = 8;
/// Reports held for the link (faults latch, so few can arise before the link drains them).
pub const REPORTS_LEN: usize = 8;

/// The two queues.
#[derive(Debug, Default)]
pub struct Outbox {
    reports: Vec<DeviceMsg, REPORTS_LEN>,
    replies: Deque<DeviceMsg, REPLIES_LEN>,
    dropped: u32,
}

impl Outbox {
    /// Queue a fault or state report. A state report replaces a state report still waiting
    /// (only the latest state matters); a fault is never dropped while a state report can
    /// make room.
    pub fn report(&mut self, msg: DeviceMsg) {
        let is_state = |m: &DeviceMsg| matches!(m, DeviceMsg::State(_));
        if is_state(&msg) {
            if let Some(last) = self.reports.last_mut().filter(|m| is_state(m)) {
                *last = msg;
                return;
            }
        }
        if self.reports.is_full() {
            match self.reports.iter().position(is_state) {
                Some(i) => {
                    self.reports.remove(i);
                }
                None => {
                    self.dropped = self.dropped.wrapping_add(1);
                    return; // only faults waiting: they stay, the newest state is implied
                }
            }
            self.dropped = self.dropped.wrapping_add(1);
        }
        let _ = self.reports.push(msg);
    }

    /// Queue a reply; the oldest reply goes when full.
    pub fn reply(&mut self, msg: DeviceMsg) {
        if self.replies.is_full() {
            self.replies.pop_front();
            self.dropped = self.dropped.wrapping_add(1);
        }
        let _ = self.replies.push_back(msg);
    }

    /// Next message for the link: reports first.
    pub fn pop(&mut self) -> Option<DeviceMsg> {
        if !self.reports.is_empty() {
            return Some(self.reports.remove(0));
        }
        self.replies.pop_front()
    }

    /// Messages dropped so far.
    pub fn dropped(&self) -> u32 {
        self.dropped
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use remanent_protocol::{Ack, Fault, FaultReport, RunState, StateReport};

    #[test]
    fn a_flood_of_replies_and_states_never_pushes_a_fault_out() {
        let mut o = Outbox::default();
        let fault = DeviceMsg::Fault(FaultReport {
            time_ms: 5,
            fault: Fault::OverTemperature,
            temp_tenth_c: 1510,
        });
        o.report(fault.clone());
        for id in 0..1000u16 {
            o.reply(DeviceMsg::Ack(Ack { id }));
            o.report(DeviceMsg::State(StateReport {
                time_ms: u32::from(id),
                state: RunState::Faulted,
                segment: 0,
            }));
        }
        assert_eq!(o.pop(), Some(fault));
        assert!(matches!(o.pop(), Some(DeviceMsg::State(s)) if s.time_ms == 999));
        assert!(matches!(o.pop(), Some(DeviceMsg::Ack(a)) if a.id == 992));
    }
}
