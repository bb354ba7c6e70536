import type { Reading } from "@/lib/review/reading";

/** The plain-language reading of a window, its rate signals kept apart, and the standing cautions. */
export function ReadingBlock({ reading, headingLevel = 2 }: { reading: Reading; headingLevel?: 2 | 3 }) {
  const H = headingLevel === 2 ? "h2" : "h3";
  return (
    <section className="card reading" aria-labelledby="reading-heading" data-testid="reading">
      <H id="reading-heading">What the numbers say</H>
      <p className="reading-headline">{reading.headline}</p>
      {reading.sentences.length ? (
        <ul className="reading-list">
          {reading.sentences.map((s) => (
            <li key={s}>{s}</li>
          ))}
        </ul>
      ) : null}
      {reading.rateSentences.length ? (
        <div className="rate-note" data-testid="rate-signal">
          <strong>Defect rate</strong>
          <ul className="reading-list">
            {reading.rateSentences.map((s) => (
              <li key={s}>{s}</li>
            ))}
          </ul>
        </div>
      ) : null}
      <div className="caution" role="note" aria-label="Cautions">
        <strong>Read with care</strong>
        <ul className="reading-list">
          {reading.cautions.map((s) => (
            <li key={s}>{s}</li>
          ))}
        </ul>
      </div>
    </section>
  );
}
