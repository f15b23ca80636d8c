//! Layers: operations gathered into time steps, each qubit used at most once per layer (noise
//! excepted).

use crate::base::{Diagnostic, Span};
use crate::ir::expand::budget::cost;
use crate::ir::expand::{Expander, OpenLayer, Tally, R};
use crate::ir::{Layer, Op, OpKind};

impl Expander {
    // ---- layers -----------------------------------------------------------------------------

    /// Adds an op to the open layer, or to a layer of its own outside `layer` blocks.
    pub(super) fn push_op(&mut self, op: Op, target_spans: &[Span]) -> R<()> {
        self.spend(
            Tally::items(cost::OP + cost::TARGET * op.targets.len() as u64),
            op.span,
        )?;
        let exclusive = !matches!(op.kind, OpKind::Noise(_));
        let Some(open) = self.open.as_mut() else {
            return Err(Diagnostic::error(
                &self.src,
                op.span,
                "internal error: operation outside a layer; please report",
            ));
        };
        let mut result = Ok(());
        if exclusive {
            if self.last_use.len() < self.qubits.len() {
                self.last_use
                    .resize(self.qubits.len(), (0, Span::default()));
            }
            for (k, &q) in op.targets.iter().enumerate() {
                let span = target_spans.get(k).copied().unwrap_or(op.span);
                let slot = &mut self.last_use[q as usize];
                if slot.0 == self.layer_serial {
                    let name = &self.qubits[q as usize].name;
                    result = Err(Diagnostic::error(&self.src, span, format!("qubit `{name}` is used twice in one layer"))
                        .with_label(&self.src, slot.1, "first used here")
                        .with_hint("operations in one layer act on disjoint qubits; move one into the next `layer`"));
                    break;
                }
                *slot = (self.layer_serial, span);
            }
        }
        open.layer.ops.push(op);
        result
    }

    pub(super) fn open_layer(&mut self, span: Span) -> R<()> {
        self.spend(Tally::items(cost::LAYER), span)?;
        self.layer_serial += 1;
        self.open = Some(OpenLayer {
            layer: Layer {
                ops: Vec::new(),
                round: self.round,
                span,
            },
        });
        Ok(())
    }

    pub(super) fn close_layer(&mut self) {
        if let Some(mut open) = self.open.take() {
            // Most layers are built by pushing ops one at a time; without this a lone operation
            // would keep room for four.
            open.layer.ops.shrink_to_fit();
            self.layers.push(open.layer);
        }
    }
}
