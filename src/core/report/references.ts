/**
 * References of the methods a report names, written out once. Bibliographic details are from
 * memory of the published papers and books (check before a submission).
 */
export const REFERENCE_LIST = {
  welch1967:
    'Welch, P. D. (1967). The use of fast Fourier transform for the estimation of power spectra: a method based on time averaging over short, modified periodograms. IEEE Transactions on Audio and Electroacoustics, 15(2), 70–73.',
  welch1947:
    'Welch, B. L. (1947). The generalization of "Student\'s" problem when several different population variances are involved. Biometrika, 34(1–2), 28–35.',
  wilson1931: 'Wilson, E. B., & Hilferty, M. M. (1931). The distribution of chi-square. Proceedings of the National Academy of Sciences, 17(12), 684–688.',
  iglewicz1993: 'Iglewicz, B., & Hoaglin, D. C. (1993). How to Detect and Handle Outliers. ASQC Quality Press.',
  donoghue2020: 'Donoghue, T., et al. (2020). Parameterizing neural power spectra into periodic and aperiodic components. Nature Neuroscience, 23, 1655–1665.',
  wen2016:
    'Wen, H., & Liu, Z. (2016). Separating fractal and oscillatory components in the power spectrum of neurophysiological signal. Brain Topography, 29(1), 13–26.',
  maris2007: 'Maris, E., & Oostenveld, R. (2007). Nonparametric statistical testing of EEG- and MEG-data. Journal of Neuroscience Methods, 164(1), 177–190.',
  smith2009:
    'Smith, S. M., & Nichols, T. E. (2009). Threshold-free cluster enhancement: addressing problems of smoothing, threshold dependence and localisation in cluster inference. NeuroImage, 44(1), 83–98.',
  phipson2010:
    'Phipson, B., & Smyth, G. K. (2010). Permutation p-values should never be zero: calculating exact p-values when permutations are randomly drawn. Statistical Applications in Genetics and Molecular Biology, 9(1), Article 39.',
  hedges1985: 'Hedges, L. V., & Olkin, I. (1985). Statistical Methods for Meta-Analysis. Academic Press.',
  fisher1921: 'Fisher, R. A. (1921). On the "probable error" of a coefficient of correlation deduced from a small sample. Metron, 1, 3–32.',
  freedman1983:
    'Freedman, D., & Lane, D. (1983). A nonstochastic interpretation of reported significance levels. Journal of Business & Economic Statistics, 1(4), 292–298.',
  winkler2014: 'Winkler, A. M., et al. (2014). Permutation inference for the general linear model. NeuroImage, 92, 381–397.',
  thomson1982: 'Thomson, D. J. (1982). Spectrum estimation and harmonic analysis. Proceedings of the IEEE, 70(9), 1055–1096.',
  percival1993:
    'Percival, D. B., & Walden, A. T. (1993). Spectral Analysis for Physical Applications: Multitaper and Conventional Univariate Techniques. Cambridge University Press.',
  simonsohn2020: 'Simonsohn, U., Simmons, J. P., & Nelson, L. D. (2020). Specification curve analysis. Nature Human Behaviour, 4, 1208–1214.',
} as const;

export type ReferenceKey = keyof typeof REFERENCE_LIST;
