/** Status of a method version or reference in words with an icon, never colour alone. */
const STYLE: Record<string, { cls: string; word: string; icon: string }> = {
  draft: { cls: 'border-amber/50 bg-amber-soft text-amber', word: 'Draft', icon: '✎' },
  approved: { cls: 'border-pass/40 bg-pass-soft text-pass', word: 'Approved', icon: '✓' },
  superseded: { cls: 'border-line bg-paper text-muted', word: 'Superseded', icon: '↷' },
  retired: { cls: 'border-line bg-paper text-muted', word: 'Retired', icon: '⊘' },
};

export function StatusBadge({ status }: { status: string }) {
  const s = STYLE[status] ?? { cls: 'border-line bg-white text-ink', word: status, icon: '•' };
  return (
    <span
      className={`inline-flex items-center gap-1 rounded border px-1.5 py-0.5 text-xs font-medium whitespace-nowrap ${s.cls}`}
      data-status={status}
    >
      <span aria-hidden>{s.icon}</span>
      {s.word}
    </span>
  );
}
