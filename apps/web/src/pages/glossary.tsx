import { GLOSSARY, KRIPPENDORFF_CITATION, LANDIS_KOCH_CITATION } from '../readings';

/** The desk's words and the figures' meanings, one place for every screen to link to. */
export function GlossaryPage() {
  return (
    <section class="page glossary">
      <h1>Glossary</h1>
      <p class="lead">
        The names the screens use, and how to read each figure. The same sentences stand beside the figures on the
        screens.
      </p>
      <dl class="glossary-list">
        {GLOSSARY.map((g) => (
          <div id={g.id} key={g.id}>
            <dt>{g.term}</dt>
            <dd>{g.meaning}</dd>
          </div>
        ))}
      </dl>
      <h2>Sources of the bands</h2>
      <ul class="sources">
        <li>{LANDIS_KOCH_CITATION}</li>
        <li>{KRIPPENDORFF_CITATION}</li>
      </ul>
    </section>
  );
}
