//! Node ids of the time-expanded graph. A search may stack the graph in layers (one per number of
//! rides so far, for the fewest-rides set); each layer holds `2E + 1` nodes, E the network's
//! events: the waiting nodes `W(p)` (position `p` in the per-stop departure order), then the
//! ride nodes `R(e)` (on board, leaving at event `e`), then the query's sink.
//!
//! **Invariant:** node ids are only made and read here; no other code does arithmetic on them.

use super::Network;

/// What a node id stands for, within its layer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Node {
    /// Waiting at a stop, at the departure in position `p` of the per-stop order.
    Wait(u32),
    /// On board, leaving at event `e`.
    Ride(u32),
    /// The query's destination.
    Sink,
}

/// The id layout of one network's nodes.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct NodeIds {
    events: u32,
    per_layer: u32,
}

impl NodeIds {
    pub fn of(net: &Network) -> NodeIds {
        let events = net.events() as u32;
        NodeIds { events, per_layer: 2 * events + 1 }
    }
    /// Nodes in one layer.
    #[inline]
    pub fn per_layer(self) -> u32 {
        self.per_layer
    }
    #[inline]
    pub fn wait(self, layer: u32, p: u32) -> u32 {
        layer * self.per_layer + p
    }
    #[inline]
    pub fn ride(self, layer: u32, e: u32) -> u32 {
        layer * self.per_layer + self.events + e
    }
    #[inline]
    pub fn sink(self, layer: u32) -> u32 {
        layer * self.per_layer + self.per_layer - 1
    }
    /// The layer of `node` and what it stands for.
    #[inline]
    pub fn decode(self, node: u32) -> (u32, Node) {
        let (layer, local) = (node / self.per_layer, node % self.per_layer);
        let kind = if local < self.events {
            Node::Wait(local)
        } else if local < 2 * self.events {
            Node::Ride(local - self.events)
        } else {
            Node::Sink
        };
        (layer, kind)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ids_round_trip() {
        let ids = NodeIds { events: 5, per_layer: 11 };
        for layer in 0..3 {
            for i in 0..5 {
                assert_eq!(ids.decode(ids.wait(layer, i)), (layer, Node::Wait(i)));
                assert_eq!(ids.decode(ids.ride(layer, i)), (layer, Node::Ride(i)));
            }
            assert_eq!(ids.decode(ids.sink(layer)), (layer, Node::Sink));
        }
    }
}
