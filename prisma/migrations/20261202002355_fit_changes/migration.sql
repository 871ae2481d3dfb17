-- CreateTable
CREATE TABLE "fit_change" (
    "id" SERIAL NOT NULL,
    "spec_id" INTEGER NOT NULL,
    "economy_code" VARCHAR(3) NOT NULL,
    "from_fit_set_id" INTEGER,
    "to_fit_set_id" INTEGER NOT NULL,
    "g_star_from" DOUBLE PRECISION,
    "g_star_to" DOUBLE PRECISION,
    "g_star_old_sample" DOUBLE PRECISION,
    "revision_effect" DOUBLE PRECISION,
    "new_data_effect" DOUBLE PRECISION,
    "regime_from" TEXT,
    "regime_to" TEXT,
    "interval_from" JSONB,
    "interval_to" JSONB,
    "new_years" JSONB,
    "revised_values" INTEGER NOT NULL DEFAULT 0,
    "flagged" BOOLEAN NOT NULL DEFAULT false,
    "reasons" JSONB NOT NULL,
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,

    CONSTRAINT "fit_change_pkey" PRIMARY KEY ("id")
);

-- CreateIndex
CREATE INDEX "fit_change_spec_id_created_at_idx" ON "fit_change"("spec_id", "created_at");

-- CreateIndex
CREATE INDEX "fit_change_economy_code_idx" ON "fit_change"("economy_code");

-- CreateIndex
CREATE UNIQUE INDEX "fit_change_to_fit_set_id_economy_code_key" ON "fit_change"("to_fit_set_id", "economy_code");

-- AddForeignKey
ALTER TABLE "fit_change" ADD CONSTRAINT "fit_change_spec_id_fkey" FOREIGN KEY ("spec_id") REFERENCES "model_spec"("id") ON DELETE CASCADE ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "fit_change" ADD CONSTRAINT "fit_change_economy_code_fkey" FOREIGN KEY ("economy_code") REFERENCES "economy"("code") ON DELETE RESTRICT ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "fit_change" ADD CONSTRAINT "fit_change_from_fit_set_id_fkey" FOREIGN KEY ("from_fit_set_id") REFERENCES "fit_set"("id") ON DELETE SET NULL ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "fit_change" ADD CONSTRAINT "fit_change_to_fit_set_id_fkey" FOREIGN KEY ("to_fit_set_id") REFERENCES "fit_set"("id") ON DELETE CASCADE ON UPDATE CASCADE;
