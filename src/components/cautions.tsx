/** The safety cautions shown on every plan and on the shared-plan page. */
export function Cautions({ id = 'cautions' }: { id?: string }) {
  return (
    <section aria-labelledby={`${id}-title`} className="rounded-md border-2 border-caution-line bg-caution p-4 text-caution-ink print:border print:p-2">
      <h2 id={`${id}-title`} className="text-base font-semibold">
        Before anyone spreads
      </h2>
      <ul className="mt-2 list-disc space-y-1 pl-5 text-sm">
        <li>
          <strong>Manure gases can kill.</strong> Hydrogen sulfide builds up around storages and is released in bursts during
          agitation and pumping. Never enter a manure storage, keep people and animals away and ventilate buildings while
          agitating.
        </li>
        <li>Keep the setbacks from wells, tile inlets, sinkholes and surface water that apply to each field.</li>
        <li>Follow the local rules for spreading on frozen or snow-covered ground.</li>
        <li>
          This plan is advisory. Local regulations and certified nutrient-management practice take precedence over it.
        </li>
      </ul>
    </section>
  )
}
