// A slider's value (an index into its axis) shown as that axis value's label.
return labels[Math.round(tick)] ?? String(tick);
