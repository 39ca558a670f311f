/** The cautions of the product, short and calm; on the sign-in screen and under the queue. */
export function Cautions({ compact = false }: { compact?: boolean }) {
  if (compact) {
    return (
      <p class="cautions compact">
        Cribra supports triage; it does not decide. Decisions about threats belong to trained people under your
        organisation's protocols and local law. If a life may be at risk, contact emergency services. These texts may
        hold personal data: keep them inside this tool.
      </p>
    );
  }
  return (
    <section class="cautions" aria-label="Before you start">
      <h2>Before you start</h2>
      <ul>
        <li>
          Cribra supports triage; it does not decide. A prediction set is a statistical statement about the pool as a
          whole, not a judgement about a person.
        </li>
        <li>
          Decisions about threats belong to trained people, under your organisation's protocols and local law. Where a
          life may be at risk, contact emergency services.
        </li>
        <li>
          The texts may hold personal data. Access is restricted and every decision is kept in the audit trail; follow
          the data-protection rules that apply to you.
        </li>
      </ul>
    </section>
  );
}
