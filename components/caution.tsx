// The standing clinical caution shown at the foot of every clinical page.
export function Caution() {
  return (
    <footer className="mt-10 border-t border-line pt-4 text-sm text-ink-soft">
      <p>
        <strong className="text-ink">Estimates support, and never replace, clinical judgement.</strong> Size figures from plain films are
        approximate (supine and AP films, loculated or adherent air and bullous lungs make every method unreliable). Follow your local
        protocols; management is decided by a licensed clinician who has seen the patient.
      </p>
    </footer>
  );
}
