export { AnalysisScreen as default } from '../../components/features/analyses/analysis-screen';
