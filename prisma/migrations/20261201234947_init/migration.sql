-- CreateEnum
CREATE TYPE "EconomyKind" AS ENUM ('ECONOMY', 'AGGREGATE');

-- CreateEnum
CREATE TYPE "Role" AS ENUM ('VIEWER', 'EDITOR', 'ADMIN');

-- CreateTable
CREATE TABLE "economy" (
    "code" VARCHAR(3) NOT NULL,
    "name" TEXT NOT NULL,
    "kind" "EconomyKind" NOT NULL DEFAULT 'ECONOMY',
    "is_demo" BOOLEAN NOT NULL DEFAULT false,
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updated_at" TIMESTAMPTZ(3) NOT NULL,

    CONSTRAINT "economy_pkey" PRIMARY KEY ("code")
);

-- CreateTable
CREATE TABLE "source" (
    "id" SERIAL NOT NULL,
    "name" TEXT NOT NULL,
    "title" TEXT NOT NULL,
    "kind" TEXT NOT NULL,
    "format" TEXT NOT NULL,
    "config" JSONB NOT NULL,
    "enabled" BOOLEAN NOT NULL DEFAULT false,
    "schedule" TEXT NOT NULL DEFAULT '0 6 * * *',
    "timezone" TEXT NOT NULL DEFAULT 'UTC',
    "is_demo" BOOLEAN NOT NULL DEFAULT false,
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updated_at" TIMESTAMPTZ(3) NOT NULL,

    CONSTRAINT "source_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "series" (
    "id" SERIAL NOT NULL,
    "source_id" INTEGER NOT NULL,
    "economy_code" VARCHAR(3) NOT NULL,
    "concept" TEXT NOT NULL,
    "unit" TEXT NOT NULL,
    "series_key" TEXT NOT NULL,
    "derivation" JSONB,
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,

    CONSTRAINT "series_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "vintage" (
    "id" SERIAL NOT NULL,
    "source_id" INTEGER NOT NULL,
    "seq" INTEGER NOT NULL,
    "label" TEXT NOT NULL,
    "released_at" TIMESTAMPTZ(3),
    "fetched_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "content_hash" TEXT NOT NULL,
    "observation_count" INTEGER NOT NULL,
    "added_count" INTEGER NOT NULL DEFAULT 0,
    "revised_count" INTEGER NOT NULL DEFAULT 0,
    "removed_count" INTEGER NOT NULL DEFAULT 0,
    "notes" JSONB,
    "is_demo" BOOLEAN NOT NULL DEFAULT false,

    CONSTRAINT "vintage_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "observation" (
    "id" BIGSERIAL NOT NULL,
    "series_id" INTEGER NOT NULL,
    "vintage_id" INTEGER NOT NULL,
    "vintage_seq" INTEGER NOT NULL,
    "period" TEXT NOT NULL,
    "year" INTEGER NOT NULL,
    "value" DOUBLE PRECISION,
    "status" TEXT,
    "removed" BOOLEAN NOT NULL DEFAULT false,

    CONSTRAINT "observation_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "model_spec" (
    "id" SERIAL NOT NULL,
    "name" TEXT NOT NULL,
    "description" TEXT NOT NULL,
    "spec" JSONB NOT NULL,
    "active" BOOLEAN NOT NULL DEFAULT true,
    "is_default" BOOLEAN NOT NULL DEFAULT false,
    "builtin" BOOLEAN NOT NULL DEFAULT false,
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,

    CONSTRAINT "model_spec_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "fit_set" (
    "id" SERIAL NOT NULL,
    "spec_id" INTEGER NOT NULL,
    "as_of" JSONB NOT NULL,
    "as_of_label" TEXT NOT NULL,
    "data_hash" TEXT NOT NULL,
    "code_version" TEXT NOT NULL,
    "summary" JSONB,
    "warnings" JSONB,
    "job_run_id" INTEGER,
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,

    CONSTRAINT "fit_set_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "fit" (
    "id" SERIAL NOT NULL,
    "fit_set_id" INTEGER NOT NULL,
    "economy_code" VARCHAR(3) NOT NULL,
    "nobs" INTEGER NOT NULL,
    "gamma" DOUBLE PRECISION,
    "theta" DOUBLE PRECISION,
    "log_b" DOUBLE PRECISION,
    "se_gamma" DOUBLE PRECISION,
    "se_theta" DOUBLE PRECISION,
    "n" DOUBLE PRECISION,
    "g_star" DOUBLE PRECISION,
    "g_star_lo" DOUBLE PRECISION,
    "g_star_hi" DOUBLE PRECISION,
    "p_theta_ge_1" DOUBLE PRECISION,
    "regime" TEXT,
    "details" JSONB,
    "warnings" JSONB,
    "data_hash" TEXT NOT NULL,

    CONSTRAINT "fit_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "job_run" (
    "id" SERIAL NOT NULL,
    "job" TEXT NOT NULL,
    "tick" TIMESTAMPTZ(3) NOT NULL,
    "trigger" TEXT NOT NULL DEFAULT 'schedule',
    "status" TEXT NOT NULL DEFAULT 'running',
    "instance" TEXT NOT NULL,
    "started_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "finished_at" TIMESTAMPTZ(3),
    "heartbeat_at" TIMESTAMPTZ(3),
    "counts" JSONB,
    "progress" JSONB,
    "error" TEXT,
    "details" JSONB,

    CONSTRAINT "job_run_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "app_user" (
    "id" SERIAL NOT NULL,
    "email" TEXT NOT NULL,
    "name" TEXT NOT NULL,
    "password_hash" TEXT NOT NULL,
    "role" "Role" NOT NULL DEFAULT 'VIEWER',
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,

    CONSTRAINT "app_user_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "session" (
    "id" TEXT NOT NULL,
    "user_id" INTEGER NOT NULL,
    "expires_at" TIMESTAMPTZ(3) NOT NULL,
    "created_at" TIMESTAMPTZ(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,

    CONSTRAINT "session_pkey" PRIMARY KEY ("id")
);

-- CreateTable
CREATE TABLE "setting" (
    "key" TEXT NOT NULL,
    "value" JSONB NOT NULL,
    "updated_at" TIMESTAMPTZ(3) NOT NULL,

    CONSTRAINT "setting_pkey" PRIMARY KEY ("key")
);

-- CreateIndex
CREATE UNIQUE INDEX "source_name_key" ON "source"("name");

-- CreateIndex
CREATE INDEX "series_economy_code_concept_idx" ON "series"("economy_code", "concept");

-- CreateIndex
CREATE UNIQUE INDEX "series_source_id_economy_code_concept_unit_key" ON "series"("source_id", "economy_code", "concept", "unit");

-- CreateIndex
CREATE INDEX "vintage_source_id_content_hash_idx" ON "vintage"("source_id", "content_hash");

-- CreateIndex
CREATE UNIQUE INDEX "vintage_source_id_seq_key" ON "vintage"("source_id", "seq");

-- CreateIndex
CREATE UNIQUE INDEX "vintage_source_id_label_key" ON "vintage"("source_id", "label");

-- CreateIndex
CREATE INDEX "observation_vintage_id_idx" ON "observation"("vintage_id");

-- CreateIndex
CREATE UNIQUE INDEX "observation_series_id_period_vintage_seq_key" ON "observation"("series_id", "period", "vintage_seq");

-- CreateIndex
CREATE UNIQUE INDEX "model_spec_name_key" ON "model_spec"("name");

-- CreateIndex
CREATE INDEX "fit_set_spec_id_created_at_idx" ON "fit_set"("spec_id", "created_at");

-- CreateIndex
CREATE INDEX "fit_economy_code_idx" ON "fit"("economy_code");

-- CreateIndex
CREATE UNIQUE INDEX "fit_fit_set_id_economy_code_key" ON "fit"("fit_set_id", "economy_code");

-- CreateIndex
CREATE INDEX "job_run_started_at_idx" ON "job_run"("started_at");

-- CreateIndex
CREATE UNIQUE INDEX "job_run_job_tick_key" ON "job_run"("job", "tick");

-- CreateIndex
CREATE UNIQUE INDEX "app_user_email_key" ON "app_user"("email");

-- CreateIndex
CREATE INDEX "session_user_id_idx" ON "session"("user_id");

-- AddForeignKey
ALTER TABLE "series" ADD CONSTRAINT "series_source_id_fkey" FOREIGN KEY ("source_id") REFERENCES "source"("id") ON DELETE CASCADE ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "series" ADD CONSTRAINT "series_economy_code_fkey" FOREIGN KEY ("economy_code") REFERENCES "economy"("code") ON DELETE RESTRICT ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "vintage" ADD CONSTRAINT "vintage_source_id_fkey" FOREIGN KEY ("source_id") REFERENCES "source"("id") ON DELETE CASCADE ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "observation" ADD CONSTRAINT "observation_series_id_fkey" FOREIGN KEY ("series_id") REFERENCES "series"("id") ON DELETE CASCADE ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "observation" ADD CONSTRAINT "observation_vintage_id_fkey" FOREIGN KEY ("vintage_id") REFERENCES "vintage"("id") ON DELETE CASCADE ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "fit_set" ADD CONSTRAINT "fit_set_spec_id_fkey" FOREIGN KEY ("spec_id") REFERENCES "model_spec"("id") ON DELETE CASCADE ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "fit_set" ADD CONSTRAINT "fit_set_job_run_id_fkey" FOREIGN KEY ("job_run_id") REFERENCES "job_run"("id") ON DELETE SET NULL ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "fit" ADD CONSTRAINT "fit_fit_set_id_fkey" FOREIGN KEY ("fit_set_id") REFERENCES "fit_set"("id") ON DELETE CASCADE ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "fit" ADD CONSTRAINT "fit_economy_code_fkey" FOREIGN KEY ("economy_code") REFERENCES "economy"("code") ON DELETE RESTRICT ON UPDATE CASCADE;

-- AddForeignKey
ALTER TABLE "session" ADD CONSTRAINT "session_user_id_fkey" FOREIGN KEY ("user_id") REFERENCES "app_user"("id") ON DELETE CASCADE ON UPDATE CASCADE;
